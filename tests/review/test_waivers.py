"""Waivers (auditor.review.waivers): the TOML file, marking findings, and the --fail-on gate.

Outside truth: the waiver file must be TOML that Python's own parser (tomllib, TOML 1.0) reads
back to the same text, and audit.json with waivers must still meet tests/schema/audit.schema.json.
"""

from __future__ import annotations

import json
import shutil
import tomllib
from pathlib import Path

import jsonschema
import pytest

from auditor.errors import UsageError
from auditor.model import SEVERITY_RANK, AuditResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.report.json import render_json
from auditor.review.identity import assign_identities
from auditor.review.waivers import (
    WAIVER_FILENAME,
    Waiver,
    add_waiver,
    apply_waivers,
    choose_finding,
    counts_for_gate,
    default_waiver_file,
    find_findings,
    load_waivers,
    parse_waivers,
    render_waiver,
    waiver_for,
)

ROOT = Path(__file__).resolve().parents[2]
FIXTURES = ROOT / "fixtures" / "workbooks"
LINES = "ops_line_review_with_errors.xlsx"
RANGES = "ops_ranges_past_table.xlsx"


def _audit(folder: Path) -> AuditResult:
    workbooks = audit_batch(collect_inputs([folder]), load_policy("general"))
    return assign_identities(AuditResult("0", "general", workbooks, inputs=[str(folder)]))


@pytest.fixture
def lines_folder(tmp_path: Path) -> Path:
    shutil.copyfile(FIXTURES / LINES, tmp_path / LINES)
    return tmp_path


def _fails(result: AuditResult, fail_on: str) -> bool:
    """The CLI's exit-1 rule once the lead routes it through counts_for_gate."""
    limit = SEVERITY_RANK[fail_on]
    return any(
        SEVERITY_RANK[f.severity] <= limit and counts_for_gate(f) for f in result.all_findings()
    )


def test_waived_findings_stay_in_the_report_but_do_not_fail_the_run(
    lines_folder: Path,
) -> None:
    result = _audit(lines_folder)
    critical = [f for f in result.all_findings() if f.severity == "critical"]
    assert critical and _fails(result, "critical")
    text = "".join(
        render_waiver(
            Waiver(f.identity, "Rerun agreed; see QA log 17", "A. Reviewer", "2024-05-03")
        )
        for f in critical
    )
    (lines_folder / WAIVER_FILENAME).write_text(text, encoding="utf-8")
    unused = apply_waivers(result, load_waivers(default_waiver_file(lines_folder)))
    assert unused == []
    assert not _fails(result, "critical")
    assert _fails(result, "major")  # the major findings are not waived
    document = json.loads(render_json(result))
    book = document["workbooks"][0]
    every = book["findings"] + [f for r in book["regressions"] for f in r["findings"]]
    marked = [f for f in every if f["waived"] is not None]
    assert len(marked) == len(critical)
    assert (
        marked[0]["waived"] == "Rerun agreed; see QA log 17 (accepted by A. Reviewer on 2024-05-03)"
    )
    assert marked[0]["decision"] == {
        "decision": "waived",
        "reason": "Rerun agreed; see QA log 17",
        "name": "A. Reviewer",
        "date": "2024-05-03",
    }
    assert {f["decision"]["decision"] for f in every if f["waived"] is None} == {"open"}
    schema = json.loads((ROOT / "tests" / "schema" / "audit.schema.json").read_text("utf-8"))
    jsonschema.validate(document, schema)


def test_a_waiver_whose_finding_is_gone_is_returned_as_unused(lines_folder: Path) -> None:
    result = _audit(lines_folder)
    stale = Waiver("0123456789abcdef", "fixed long ago", "B. Lead", "2023-01-01")
    assert apply_waivers(result, [stale]) == [stale]
    assert all(f.waived is None for f in result.all_findings())


def test_waive_appends_to_the_file_and_keeps_what_was_there(lines_folder: Path) -> None:
    result = _audit(lines_folder)
    target = find_findings(result, LINES, "'Line 2'!$E$4", "ranges-disagree")
    assert len(target) == 1
    reason = 'Swap "x/y" known;\nsee the signed copy — ünïcode kept \\ too'
    waiver = waiver_for(target[0], LINES, reason, "A. Reviewer", "2024-05-03")
    path = lines_folder / WAIVER_FILENAME
    path.write_text("# our accepted findings\n", encoding="utf-8")
    add_waiver(path, waiver)
    text = path.read_text(encoding="utf-8")
    assert text.startswith("# our accepted findings\n")
    data = tomllib.loads(text)
    assert data["waiver"][0]["reason"] == reason
    assert str(data["waiver"][0]["date"]) == "2024-05-03"  # a TOML date, not a string
    assert data["waiver"][0]["cell"] == "Line 2!E4"
    assert load_waivers(path) == [waiver]
    with pytest.raises(UsageError, match="already waived"):
        add_waiver(path, waiver)
    assert tomllib.loads(path.read_text(encoding="utf-8")) == data  # refused: file unchanged


def test_find_findings_needs_the_check_when_several_share_a_cell(tmp_path: Path) -> None:
    # Hall B holds two mistakes (whole columns over the headers, a mean row fitted as a point)
    # that spoil the same reported cells: two findings at Hall B!F10.
    shutil.copyfile(FIXTURES / RANGES, tmp_path / RANGES)
    result = _audit(tmp_path)
    both = find_findings(result, RANGES, "Hall B!F10")
    assert sorted(f.check for f in both) == ["range-beyond-table", "total-row-in-range"]
    assert find_findings(result, "other.xlsx", "Hall B!F10") == []
    with pytest.raises(UsageError, match="2 findings at 'Hall B!F10'.*add --check"):
        choose_finding(result, RANGES, "Hall B!F10")
    with pytest.raises(UsageError, match="no finding at 'Hall B!A1'.*Hall B!F4 range-beyond"):
        choose_finding(result, RANGES, "Hall B!A1")
    chosen = choose_finding(result, RANGES, "Hall B!F10", "total-row-in-range")
    assert chosen.check == "total-row-in-range" and "Hall B!F10" in chosen.cells


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("[[waiver]]\nidentity = 'xyz'\nreason='r'\nname='n'\ndate=2024-01-01\n", "'xyz'"),
        ("[[waiver]]\nidentity = '0123456789abcdef'\nname='n'\ndate=2024-01-01\n", "reason"),
        (
            "[[waiver]]\nidentity = '0123456789abcdef'\nreason='r'\nname='n'\ndate='3 May'\n",
            "'3 May'",
        ),
        (
            "[[waiver]]\nidentity = '0123456789abcdef'\nreason=' '\nname='n'\ndate=2024-01-01\n",
            "reason ' '",
        ),
        (
            "[[waiver]]\nidentity='0123456789abcdef'\nreason='r'\nname='n'\ndate=2024-01-01\n"
            "expires=2025-01-01\n",
            "'expires'",
        ),
        ("[[waiver]\n", "not valid TOML"),
        ("[waivers]\n", "'waivers'"),
    ],
)
def test_bad_waiver_files_are_explained(text: str, message: str) -> None:
    with pytest.raises(UsageError, match=message.replace("[", r"\[")):
        parse_waivers(text, "team/regaudit-waivers.toml")


def test_a_repeated_identity_is_refused() -> None:
    entry = "[[waiver]]\nidentity='0123456789ABCDEF'\nreason='r'\nname='n'\ndate=2024-01-01\n"
    with pytest.raises(UsageError, match="repeats identity '0123456789abcdef'"):
        parse_waivers(entry + entry, "w.toml")


def test_a_missing_file_is_no_waivers_unless_asked_for(tmp_path: Path) -> None:
    assert load_waivers(tmp_path / WAIVER_FILENAME) == []
    with pytest.raises(UsageError, match="does not exist"):
        load_waivers(tmp_path / "named.toml", required=True)
