"""Every registered check has a case file in tests/cases/<check-id>.toml with at least one case
where it fires and one where it stays silent; one parametrised test runs them all.

A case names a fixture workbook (LibreOffice-recalculated, declared in fixtures/manifest.json),
optionally the regression (by its y range as the formulas reference it), whether the check fires,
and where it fires: the cells, severity and kind expected.
"""

from __future__ import annotations

import functools
import tomllib
from pathlib import Path
from typing import Any

import pytest

from auditor.checks import REGISTRY
from auditor.model import Finding, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

ROOT = Path(__file__).resolve().parents[2]
CASES = ROOT / "tests" / "cases"
WORKBOOKS = ROOT / "fixtures"  # case files name "workbooks/…" or "edge/…"


def _case_files() -> dict[str, dict[str, Any]]:
    return {p.stem: tomllib.loads(p.read_text(encoding="utf-8")) for p in CASES.glob("*.toml")}


@functools.cache
def _audited(name: str, policy: str) -> WorkbookResult:
    return audit_workbook(WORKBOOKS / name, load_policy(policy))


def _findings(case: dict[str, Any], check_id: str) -> list[Finding]:
    result = _audited(case["workbook"], case.get("policy", "general"))
    assert result.status != "unreadable", result.error
    if "regression_y" in case:
        matches = [r for r in result.regressions if r.y_range == case["regression_y"]]
        assert matches, f"no regression with y range {case['regression_y']!r}"
        pool = matches[0].findings
    else:
        pool = result.all_findings()
    # A check's finding may be merged into the one finding of its mistake (auditor.checks.merge):
    # the merged finding names every check it covers.
    return [
        f for f in pool if f.check == check_id or check_id in f.evidence.get("merged_checks", [])
    ]


def _all_cases() -> list[tuple[str, dict[str, Any]]]:
    return [
        (check_id, case)
        for check_id, data in sorted(_case_files().items())
        for case in data.get("case", [])
    ]


def test_every_check_has_cases_both_ways() -> None:
    files = _case_files()
    missing = sorted(set(REGISTRY) - set(files))
    assert missing == [], f"checks without a case file in tests/cases/: {missing}"
    unknown = sorted(set(files) - set(REGISTRY))
    assert unknown == [], f"case files for unknown checks: {unknown}"
    for check_id, data in files.items():
        fires = {bool(case.get("fires")) for case in data.get("case", [])}
        assert fires == {True, False}, f"{check_id}: needs a firing and a silent case"


@pytest.mark.parametrize(
    ("check_id", "case"), _all_cases(), ids=[f"{c}:{case['name']}" for c, case in _all_cases()]
)
def test_case(check_id: str, case: dict[str, Any]) -> None:
    found = _findings(case, check_id)
    if not case.get("fires"):
        assert found == [], [f.message for f in found]
        return
    assert found, f"{check_id} did not fire"
    cells = {cell for f in found for cell in f.cells}
    for cell in case.get("cells", []):
        assert cell in cells, (cell, sorted(cells))
    if "severity" in case:
        assert case["severity"] in {f.severity for f in found}, [f.severity for f in found]
    if "kind" in case:
        assert case["kind"] in {f.kind for f in found}, [f.kind for f in found]
    for needle in case.get("message_contains", []):
        assert any(needle in f.message for f in found), [f.message for f in found]
