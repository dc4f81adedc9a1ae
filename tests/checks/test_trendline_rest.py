"""trendline-stops-short: a chart series whose table continues past its range.

Generated variety (seeded): scatter charts with a linear trendline over data down columns or
across rows, on sheets with plain, spaced and non-Latin names; the series stops 1 to 3 rows (or
columns) short of its table; the rows left out follow another line, or turn the slope around.
Deliberate subsets stay silent: a blank row, a label row ("excluded"), a second series over the
rest, a row of means labelled so. Expected fits: ``numpy.polyfit`` on the numbers the test wrote.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter
from xlsxwriter.utility import xl_rowcol_to_cell

from auditor.model import Finding, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

NAMES = ("Log", "Pump House 2", "Журнал", "記録")
CHECK = "trendline-stops-short"


@dataclass
class Table:
    sheet: str
    across: bool
    first: int  # 0-based first data row (or column, across)
    line: int  # 0-based x column (or x row, across); y is the next one
    x: list[float]
    y: list[float]
    plotted: int  # points the series takes

    def address(self, axis: int, points: int) -> str:
        start, end = self.first, self.first + points - 1
        if self.across:
            one, two = (self.line + axis, start), (self.line + axis, end)
        else:
            one, two = (start, self.line + axis), (end, self.line + axis)
        return f"{self.sheet}!{xl_rowcol_to_cell(*one)}:{xl_rowcol_to_cell(*two)}"

    def ref(self, axis: int, start: int, points: int) -> list[object]:
        first, last = self.first + start, self.first + start + points - 1
        if self.across:
            return [self.sheet, self.line + axis, first, self.line + axis, last]
        return [self.sheet, first, self.line + axis, last, self.line + axis]


def _table(seed: int) -> Table:
    rng = np.random.default_rng(seed)
    plotted = int(rng.integers(6, 16))
    short = 1 + seed % 3
    n = plotted + short
    x = np.round(np.sort(rng.uniform(1.0, 50.0, n)), 2)
    slope = float(rng.uniform(0.5, 3.0))
    y = 4.0 + slope * x + rng.normal(0, 1.0, n)
    if seed % 5 == 4:
        y[plotted:] -= 12.0 * slope * x[plotted:]  # the rest turns the slope around
    else:
        y[plotted:] += float(rng.uniform(8.0, 30.0))  # the rest sits on another level
    return Table(
        sheet=NAMES[seed % len(NAMES)],
        across=seed % 2 == 1,
        first=int(rng.integers(2, 6)),
        line=int(rng.integers(0, 4)),
        x=x.tolist(),
        y=np.round(y, 3).tolist(),
        plotted=plotted,
    )


def _write(path: Path, table: Table, variant: str = "short") -> Table:
    """The table and its chart; ``variant`` splits the rest off: "blank", "label", "second",
    plots the whole table ("whole"), or puts a labelled row of means after the series ("mean")."""
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet(table.sheet)
    xs, ys = list(table.x), list(table.y)
    if variant == "mean":  # the row after the series holds the means, labelled so
        k = table.plotted
        xs, ys = xs[:k] + [float(np.mean(xs[:k]))], ys[:k] + [float(np.mean(ys[:k]))]
        label = table.line - 1 if table.line else table.line + 2
        for index in range(k + 1):
            at = table.first + index
            where = (label, at) if table.across else (at, label)
            sheet.write(*where, "Mean" if index == k else f"S-{index + 1:02d}")
    gap = 1 if variant in ("blank", "label") else 0
    for index, (x, y) in enumerate(zip(xs, ys, strict=True)):
        at = table.first + index + (gap if index >= table.plotted else 0)
        if table.across:
            sheet.write_column(table.line, at, [x, y])
        else:
            sheet.write_row(at, table.line, [x, y])
    if variant == "label":
        at = table.first + table.plotted
        where = (table.line, at) if table.across else (at, table.line)
        sheet.write(*where, "excluded (probe fouled)")
    plotted = len(xs) if variant == "whole" else table.plotted
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {
            "categories": table.ref(0, 0, plotted),
            "values": table.ref(1, 0, plotted),
            "trendline": {"type": "linear", "display_equation": True},
        }
    )
    if variant == "second":
        rest = len(xs) - table.plotted
        chart.add_series(
            {
                "categories": table.ref(0, table.plotted, rest),
                "values": table.ref(1, table.plotted, rest),
            }
        )
    sheet.insert_chart("H20", chart)
    book.close()
    return table


def _findings(path: Path) -> list[Finding]:
    result: WorkbookResult = audit_workbook(path, load_policy("general"))
    assert result.status != "unreadable", result.error
    return [f for f in result.all_findings() if f.check == CHECK]


@pytest.mark.parametrize("seed", range(10))
def test_series_short_of_its_table(tmp_path: Path, seed: int) -> None:
    table = _write(tmp_path / f"short{seed}.xlsx", _table(seed))
    found = _findings(tmp_path / f"short{seed}.xlsx")
    assert len(found) == 1, [f.message for f in found]
    finding = found[0]
    n, k = len(table.x), table.plotted
    drawn = np.polyfit(table.x[:k], table.y[:k], 1)
    whole = np.polyfit(table.x, table.y, 1)
    assert finding.kind == "range-short"
    assert finding.evidence["left_out"] == n - k
    assert finding.evidence["series_y"] == table.address(1, k)
    assert finding.evidence["table_x"] == table.address(0, n)
    assert finding.evidence["table_y"] == table.address(1, n)
    assert finding.evidence["drawn_slope"] == pytest.approx(drawn[0], rel=1e-9)
    assert finding.evidence["drawn_intercept"] == pytest.approx(drawn[1], rel=1e-9, abs=1e-9)
    assert finding.evidence["table_slope"] == pytest.approx(whole[0], rel=1e-9)
    assert finding.evidence["table_intercept"] == pytest.approx(whole[1], rel=1e-9, abs=1e-9)
    if drawn[0] * whole[0] < 0:
        assert finding.severity == "critical"
        assert "changes sign" in finding.message
    else:
        assert f"{drawn[0]:.4g}" != f"{whole[0]:.4g}"  # the data are made so
        assert finding.severity == "major"


@pytest.mark.parametrize("variant", ["blank", "label", "second", "whole", "mean"])
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_a_subset_split_off_or_the_whole_table_is_silent(
    tmp_path: Path, variant: str, seed: int
) -> None:
    path = tmp_path / f"{variant}{seed}.xlsx"
    _write(path, _table(seed), variant)
    assert _findings(path) == []


def test_rows_with_a_note_beside_them_draw_only_a_minor_finding(tmp_path: Path) -> None:
    table = _table(2)
    table.across = False
    path = tmp_path / "noted.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet(table.sheet)
    for index, (x, y) in enumerate(zip(table.x, table.y, strict=True)):
        sheet.write_row(table.first + index, table.line, [x, y])
        if index >= table.plotted:
            sheet.write(table.first + index, table.line + 2, "outlier")
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {
            "categories": table.ref(0, 0, table.plotted),
            "values": table.ref(1, 0, table.plotted),
            "trendline": {"type": "linear"},
        }
    )
    sheet.insert_chart("H20", chart)
    book.close()
    found = _findings(path)
    assert [f.severity for f in found] == ["minor"]
    assert "outlier" in found[0].message


def test_rows_another_regression_uses_are_not_the_series_rest(tmp_path: Path) -> None:
    table = _table(2)  # three rows past the series, data down columns
    assert not table.across and len(table.x) - table.plotted == 3
    path = tmp_path / "formula.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet(table.sheet)
    for index, (x, y) in enumerate(zip(table.x, table.y, strict=True)):
        sheet.write_row(table.first + index, table.line, [x, y])
    rest = f"{{}}{table.first + table.plotted + 1}:{{}}{table.first + len(table.x)}"
    x_letter, y_letter = (xl_rowcol_to_cell(0, table.line + i)[:-1] for i in (0, 1))
    ys, xs = rest.format(y_letter, y_letter), rest.format(x_letter, x_letter)
    sheet.write(0, table.line + 5, "Slope of the later rows")
    sheet.write_formula(0, table.line + 6, f"=SLOPE({ys},{xs})")
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {
            "categories": table.ref(0, 0, table.plotted),
            "values": table.ref(1, 0, table.plotted),
            "trendline": {"type": "linear"},
        }
    )
    sheet.insert_chart("H20", chart)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert any(r.y_range.endswith(ys) for r in result.regressions), [
        r.y_range for r in result.regressions
    ]
    assert [f for f in result.all_findings() if f.check == CHECK] == []
