"""Baselines (auditor.review.baseline): record today's findings, then see only new ones.

The scenario is a team's folder over time, built from the fixture workbooks whose findings are
declared in fixtures/manifest.json: one workbook is corrected (replaced by a clean one), one is
added with known errors, one is left out of the next run, one stays as it was. Row moves are
made with openpyxl's formula-translating move, as in tests/test_identity.py.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pytest

from auditor.errors import UsageError
from auditor.model import AuditResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.review.baseline import (
    BASELINE_FORMAT,
    apply_baseline,
    create_baseline,
    describe_outcome,
    load_baseline,
    parse_baseline,
    save_baseline,
)

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
STABILITY = "lab_stability_review_with_errors.xlsx"
LINES = "ops_line_review_with_errors.xlsx"
PHOTOMETERS = "lab_three_photometers_side_by_side.xlsx"
CLEAN = "ops_throughput_vs_temperature.xlsx"


def _audit(folder: Path) -> AuditResult:
    workbooks = audit_batch(collect_inputs([folder]), load_policy("general"))
    return AuditResult("0.1.0", "general", workbooks, "2024-05-03", inputs=[str(folder)])


def _count(result: AuditResult, name: str) -> int:
    return sum(len(w.all_findings()) for w in result.workbooks if Path(w.path).name == name)


def test_a_baseline_run_shows_new_findings_and_lists_fixed_ones(tmp_path: Path) -> None:
    team = tmp_path / "team"
    team.mkdir()
    for name in (STABILITY, LINES, PHOTOMETERS, CLEAN):
        shutil.copyfile(FIXTURES / name, team / name)
    before = _audit(team)
    baseline_file = save_baseline(create_baseline(before), tmp_path / "regaudit-baseline.json")
    recorded = load_baseline(baseline_file)
    assert len(recorded.entries) == len(before.all_findings()) > 10

    # Next month: the line review is corrected, a new review arrives, one file is not audited.
    shutil.copyfile(FIXTURES / CLEAN, team / LINES)
    shutil.copyfile(FIXTURES / STABILITY, team / "new_stability_review.xlsx")
    (team / PHOTOMETERS).rename(tmp_path / PHOTOMETERS)
    after = _audit(team)
    outcome = apply_baseline(after, recorded)

    new = outcome.result.all_findings()
    assert len(new) == _count(after, "new_stability_review.xlsx") == _count(before, STABILITY)
    assert {Path(w.path).name for w in outcome.result.workbooks if w.all_findings()} == {
        "new_stability_review.xlsx"
    }
    assert outcome.known == _count(before, STABILITY)
    assert len(outcome.fixed) == _count(before, LINES)
    assert {entry.workbook for entry in outcome.fixed} == {LINES}
    assert len(outcome.unchecked) == _count(before, PHOTOMETERS)
    assert len(after.all_findings()) == len(new) + outcome.known  # the input is not changed
    cap = 5  # below the number of gone entries, so the cap is exercised
    lines = describe_outcome(outcome, limit=cap)
    assert lines[0].startswith(f"baseline: {outcome.known} known finding(s) left out")
    assert len(outcome.fixed) + len(outcome.unchecked) > cap
    listed = sum(line.startswith(("  fixed: ", "  not checked")) for line in lines)
    assert listed == cap
    assert lines[-1] == f"  … and {len(outcome.fixed) + len(outcome.unchecked) - cap} more"


def test_moved_rows_bring_no_new_findings(tmp_path: Path) -> None:
    before, after = tmp_path / "before", tmp_path / "after"
    before.mkdir()
    after.mkdir()
    openpyxl.load_workbook(FIXTURES / STABILITY).save(before / STABILITY)
    moved = openpyxl.load_workbook(FIXTURES / STABILITY)
    for sheet in moved:
        sheet.move_range(sheet.dimensions, rows=3, translate=True)
    moved.save(after / STABILITY)
    baseline = create_baseline(_audit(before))
    outcome = apply_baseline(_audit(after), baseline)
    assert baseline.entries
    assert outcome.result.all_findings() == []
    assert outcome.fixed == [] and outcome.known == len(baseline.entries)


def test_the_file_is_versioned_json_with_readable_entries(tmp_path: Path) -> None:
    shutil.copyfile(FIXTURES / LINES, tmp_path / LINES)
    result = _audit(tmp_path)
    path = save_baseline(create_baseline(result), tmp_path / "out" / "baseline.json")
    data = json.loads(path.read_text(encoding="utf-8"))
    assert data["format"] == BASELINE_FORMAT and data["tool"]["name"] == "regaudit"
    assert data["created"] == "2024-05-03"
    first = data["entries"][0]
    assert set(first) == {"identity", "workbook", "check", "severity", "cells", "message"}
    assert first["workbook"] == LINES and len(first["identity"]) == 16
    assert [e["identity"] for e in data["entries"]] == [f.identity for f in result.all_findings()]


def test_a_baseline_is_never_written_over_an_audited_workbook(tmp_path: Path) -> None:
    shutil.copyfile(FIXTURES / LINES, tmp_path / LINES)
    original = (tmp_path / LINES).read_bytes()
    baseline = create_baseline(_audit(tmp_path))
    with pytest.raises(UsageError, match="refusing to write"):
        save_baseline(baseline, tmp_path / LINES, inputs=[tmp_path / LINES])
    assert (tmp_path / LINES).read_bytes() == original


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("{not json", "is not JSON"),
        ('{"format": 7, "entries": []}', "has format 7"),
        ('{"format": 1}', "no list of 'entries'"),
        ('{"format": 1, "entries": [{"check": "x"}]}', "entry 1 has no 'identity'"),
    ],
)
def test_bad_baselines_are_explained(text: str, message: str) -> None:
    with pytest.raises(UsageError, match=message):
        parse_baseline(text, "ci/baseline.json")


def test_a_missing_baseline_says_how_to_make_one(tmp_path: Path) -> None:
    with pytest.raises(UsageError, match="regaudit baseline create"):
        load_baseline(tmp_path / "none.json")
