"""A worker sends back, and records in the ledger, the data points a report shows: with
``points="findings"`` only those of regressions with a finding (the detail sheets'), the record
marked so; with "all" every one."""

from __future__ import annotations

import json
from pathlib import Path

from auditor.pipeline.batch import iter_audits
from auditor.pipeline.limits import FileLimits
from auditor.pipeline.resultjson import POINTS_LEFT_OUT, loads_record
from auditor.policy import load_policy

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
# A clean reference (regressions without a finding) beside one with slips (with findings).
PATHS = [BOOKS / "lab_clean_reference.xlsx", BOOKS / "lab_p_value_slips.xlsx"]


def _run(points: str, records: bool = False) -> dict[int, tuple[object, ...]]:
    policy = load_policy("general")
    runs = iter_audits(PATHS, policy, jobs=2, limits=FileLimits(), records=records, points=points)
    return {index: rest for index, *rest in runs}


def test_regressions_without_a_finding_come_back_without_points() -> None:
    whole, trimmed = _run("all"), _run("findings")
    regressions = [r for index in sorted(whole) for r in whole[index][0].regressions]  # type: ignore[attr-defined]
    kept = [r for index in sorted(trimmed) for r in trimmed[index][0].regressions]  # type: ignore[attr-defined]
    assert any(r.findings for r in regressions) and any(not r.findings for r in regressions)
    for before, after in zip(regressions, kept, strict=True):
        assert after.data == (before.data if before.findings else [])
        assert after.to_dict() == before.to_dict()  # audit.json does not carry the points
    assert all(r.data for r in regressions if r.n)


def _stored_counts(record: object) -> tuple[list[int], bool]:
    stored = json.loads(record)  # type: ignore[arg-type]
    counts = [r["data"]["count"] if r["data"] else 0 for r in stored["regressions"]]
    return counts, bool(stored.get(POINTS_LEFT_OUT))


def test_the_ledger_record_keeps_the_points_the_reports_show() -> None:
    whole = _run("all")
    for points in ("findings", "all"):
        for index, (_result, _seconds, _reusable, record) in _run(points, True).items():
            originals = whole[index][0].regressions  # type: ignore[attr-defined]
            counts, left_out = _stored_counts(record)
            if points == "all":
                assert counts == [len(r.data) for r in originals] and not left_out
            else:
                assert counts == [len(r.data) if r.findings else 0 for r in originals]
                assert left_out
            stored, whole_points = loads_record(record)  # type: ignore[arg-type]
            assert whole_points is (points == "all")
            assert [r.to_dict() for r in stored.regressions] == [r.to_dict() for r in originals]
    # The fixture pair has both kinds: a clean book's points are left out, a slipped one's kept.
    trimmed = _run("findings", True)
    assert sorted(sum(_stored_counts(trimmed[i][3])[0]) > 0 for i in trimmed) == [False, True]
