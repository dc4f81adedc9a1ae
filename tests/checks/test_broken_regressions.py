"""Broken regressions: a regression formula that shows an error value gets a finding saying why.

The error values are those a spreadsheet shows (common practice; the design's facts: LINEST
gives #VALUE! on text cells, and with a two-column y and no x). The LibreOffice-recalculated
case is tests/cases/regression-cell-error.toml (fixtures/make_regression_errors.py).
"""

from __future__ import annotations

from pathlib import Path

import pytest
import xlsxwriter

from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy


def _audit_with(tmp_path: Path, formula: str, shown: str, located: int = 1) -> list[str]:
    path = tmp_path / "rig.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Rig B")
    sheet.write_row(0, 0, ["Extension mm", "Load N"])
    for i in range(12):
        sheet.write_row(i + 1, 0, [2.0 + i, 25.0 + 11.0 * i + (i % 3)])
    sheet.write_formula("E1", formula, None, shown)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert result.status == "audited"
    assert len(result.regressions) == located  # a failing SLOPE(y, x) still names its data
    found = [f for f in result.all_findings() if f.check == "regression-cell-error"]
    assert [f.cells for f in found] == [["Rig B!E1"]]
    assert found[0].severity == "major"
    return [found[0].message, found[0].fix]


def test_two_column_y_and_no_x(tmp_path: Path) -> None:
    message, fix = _audit_with(tmp_path, "=LINEST(A1:B13)", "#VALUE!", located=0)
    assert "#VALUE!" in message and "spans 2 columns" in message
    assert "LINEST" in fix


def test_headers_inside_the_ranges(tmp_path: Path) -> None:
    message, _ = _audit_with(tmp_path, "=LINEST(B1:B13,A1:A13)", "#VALUE!")
    assert "Rig B!B1, Rig B!A1" in message and "headers" in message  # y first, then x


@pytest.mark.parametrize(
    ("formula", "located"), [("=SLOPE(B2:B13,A2:A9)", 1), ("=TREND(B2:B13,A2:A9,20)", 0)]
)
def test_ranges_of_different_sizes(tmp_path: Path, formula: str, located: int) -> None:
    message, _ = _audit_with(tmp_path, formula, "#N/A", located)
    assert "y has 12 cells and x 8" in message
