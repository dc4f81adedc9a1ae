"""Chart trendlines found as regressions, recomputed, and their typed copies judged.

Generated variety (seeded): scatter and line charts; data on the chart's sheet, on another sheet,
or behind a chart sheet; sheet names with spaces, quotes, Cyrillic and CJK letters; data down
columns or across rows, with a blank end cell inside the series; one to three series a chart;
intercept free or forced through zero; the equation typed back into a formula at 3 to 5
significant digits. Plus: a wrong typed copy, x and y ranges of different lengths, a series held
in the chart only (cached literals), non-linear trendlines and a line typed from constants.

Outside truth: statsmodels ``OLS`` on the numbers the test wrote (against 1..n for a line chart,
which a chart's category axis plots by position; without a constant for a forced intercept).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
import xlsxwriter
from package_builders import read_parts, write_package
from xlsxwriter.utility import xl_rowcol_to_cell

from auditor.model import RegressionResult, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

NAMES = ("Run Data", "O'Hare Line", "Данные опыта", "測定値", "Plant 3 (copy)", "Bench")


@dataclass
class Series:
    sheet: str
    first_row: int  # 0-based start of the data
    col: int  # 0-based x column (y is col + 1), or the x row for data across
    x: list[float]
    y: list[float]
    across: bool = False
    blank_end: bool = False  # the series range takes one more, empty, cell

    def cells(self, axis: int) -> tuple[int, int, int, int]:
        n = len(self.x) + (1 if self.blank_end else 0)
        if self.across:
            row = self.first_row + axis
            return (row, self.col, row, self.col + n - 1)
        col = self.col + axis
        return (self.first_row, col, self.first_row + n - 1, col)

    def address(self, axis: int, points: int | None = None) -> str:
        r1, c1, r2, c2 = self.cells(axis)
        if points is not None:
            r2, c2 = (r1, c1 + points - 1) if self.across else (r1 + points - 1, c1)
        return f"{self.sheet}!{xl_rowcol_to_cell(r1, c1)}:{xl_rowcol_to_cell(r2, c2)}"


@dataclass
class Scenario:
    plot: str
    forced: bool
    series: list[Series] = field(default_factory=list)
    copies: list[tuple[str, float, float]] = field(default_factory=list)  # cell, slope, intercept
    chart_sheet: str | None = None


def _scenario(seed: int) -> Scenario:
    rng = np.random.default_rng(seed)
    plot = "scatter" if seed % 3 else "line"
    scenario = Scenario(plot=plot, forced=plot == "scatter" and seed % 4 == 1)
    names = list(rng.permutation(NAMES))
    for index in range(int(rng.integers(1, 4))):
        n = int(rng.integers(5, 25))
        x = sorted(np.round(rng.uniform(0.5, 60.0, n), 2).tolist())
        slope, intercept = rng.uniform(-3, 3), 0.0 if scenario.forced else rng.uniform(-20, 20)
        y = np.round(intercept + slope * np.array(x) + rng.normal(0, 1.5, n), 3).tolist()
        scenario.series.append(
            Series(
                sheet=str(names[index]),
                first_row=int(rng.integers(1, 6)),
                col=int(rng.integers(0, 4)),
                x=x,
                y=y,
                across=bool(rng.integers(0, 4) == 0),
                blank_end=bool(rng.integers(0, 3) == 0),
            )
        )
    if rng.integers(0, 2):
        scenario.chart_sheet = "Chart " + str(seed)
    return scenario


def _write(scenario: Scenario, path: Path, digits: int) -> None:
    book = xlsxwriter.Workbook(str(path))
    sheets = {}
    for s in scenario.series:
        sheet = sheets.get(s.sheet) or book.add_worksheet(s.sheet)
        sheets[s.sheet] = sheet
        for i, (x, y) in enumerate(zip(s.x, s.y, strict=True)):
            if s.across:
                sheet.write_number(s.first_row, s.col + i, x)
                sheet.write_number(s.first_row + 1, s.col + i, y)
            else:
                sheet.write_number(s.first_row + i, s.col, x)
                sheet.write_number(s.first_row + i, s.col + 1, y)
    chart = book.add_chart({"type": scenario.plot})
    for number, s in enumerate(scenario.series):
        trend: dict[str, object] = {"type": "linear", "display_equation": True}
        if scenario.forced:
            trend["intercept"] = 0
        chart.add_series(
            {
                "name": f"Series {number + 1}",
                "categories": [s.sheet, *s.cells(0)],
                "values": [s.sheet, *s.cells(1)],
                "trendline": trend,
            }
        )
        if scenario.plot == "scatter" and not s.across:
            sheet = sheets[s.sheet]
            b1, b0 = _expected(scenario, s)[:2]
            row = s.first_row + 1  # 1-based first data row
            x_cell = f"${xl_rowcol_to_cell(0, s.col)[:-1]}{row}"
            slope_text, intercept_text = f"{b1:.{digits}g}", f"{b0:.{digits}g}"
            formula = f"=({slope_text}*{x_cell})+{intercept_text}".replace("+-", "-")
            cell = xl_rowcol_to_cell(s.first_row, s.col + 2)
            sheet.write_formula(cell, formula)
            scenario.copies.append((f"{s.sheet}!{cell}", float(slope_text), float(intercept_text)))
    if scenario.chart_sheet:
        book.add_chartsheet(scenario.chart_sheet).set_chart(chart)
    else:
        sheets[scenario.series[0].sheet].insert_chart("M2", chart)
    book.close()


def _expected(scenario: Scenario, s: Series) -> tuple[float, float, float]:
    """statsmodels OLS of the series as the chart fits it: slope, intercept, R²."""
    x = np.arange(1.0, len(s.y) + 1) if scenario.plot == "line" else np.array(s.x)
    design = x.reshape(-1, 1) if scenario.forced else sm.add_constant(x)
    fit = sm.OLS(np.array(s.y), design).fit()
    if scenario.forced:
        return float(fit.params[0]), 0.0, float(fit.rsquared)
    return float(fit.params[1]), float(fit.params[0]), float(fit.rsquared)


def _audit(path: Path) -> WorkbookResult:
    result = audit_workbook(path, load_policy("general"))
    assert result.status == "audited", result.error
    return result


def _by_y(result: WorkbookResult, y_range: str) -> RegressionResult:
    found = [r for r in result.regressions if r.y_range == y_range]
    assert len(found) == 1, [(r.x_range, r.y_range) for r in result.regressions]
    return found[0]


@pytest.mark.parametrize("seed", range(12))
def test_generated_trendlines_are_found_and_recomputed(tmp_path: Path, seed: int) -> None:
    scenario = _scenario(seed)
    digits = 3 + seed % 3
    path = tmp_path / f"trend{seed}.xlsx"
    _write(scenario, path, digits)
    result = _audit(path)
    assert len(result.regressions) == len(scenario.series)
    for s in scenario.series:
        regression = _by_y(result, s.address(1, len(s.y)))
        assert regression.found_by == "trendline"
        assert regression.x_range == s.address(0, len(s.x))
        assert regression.n == len(s.y)
        assert regression.intercept is not scenario.forced
        slope, intercept, r_squared = _expected(scenario, s)
        assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
        assert regression.intended["r_squared"] == pytest.approx(r_squared, rel=1e-9)
        if not scenario.forced:
            assert regression.intended["intercept"] == pytest.approx(intercept, rel=1e-9, abs=1e-9)
        positions = [f for f in regression.findings if f.check == "trendline-fits-positions"]
        assert len(positions) == (1 if scenario.plot == "line" else 0)
    for cell, slope, intercept in scenario.copies:
        reported = {
            key.split("@")[0]: value
            for r in result.regressions
            for key, value in r.reported.items()
            if value.cell == cell
        }
        assert reported["slope"].value == slope and reported["slope"].verdict == "confirmed"
        if not scenario.forced:
            assert reported["intercept"].value == intercept
            assert reported["intercept"].verdict == "confirmed"


def _simple(
    path: Path,
    y: list[float],
    formulas: dict[str, str],
    y_rows: int | None = None,
    numbers: dict[str, float] | None = None,
) -> Path:
    """One scatter series x A2:A9, y B2:B(...) on sheet 'Kiln Log' with a linear trendline."""
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Kiln Log")
    sheet.write_row(0, 0, ["Hours", "Shrinkage", "Typed"])
    x = [float(v) for v in range(2, 2 + 2 * len(Y), 2)]  # eight x values, whatever y holds
    sheet.write_column(1, 0, x)
    sheet.write_column(1, 1, y)
    for cell, formula in formulas.items():
        sheet.write_formula(cell, formula)
    for cell, number in (numbers or {}).items():
        sheet.write_number(cell, number)
    chart = book.add_chart({"type": "scatter"})
    last = 1 + (y_rows or len(y))
    chart.add_series(
        {
            "categories": f"='Kiln Log'!$A$2:$A${len(x) + 1}",
            "values": f"='Kiln Log'!$B$2:$B${last}",
            "trendline": {"type": "linear", "display_equation": True, "display_r_squared": True},
        }
    )
    sheet.insert_chart("F2", chart)
    book.close()
    return path


Y = [3.1, 5.2, 6.8, 9.3, 10.9, 13.2, 15.1, 16.8]
# statsmodels OLS of Y on x = 2, 4, …, 16: slope 0.98928571…, intercept 1.14642857…
X = np.arange(2.0, 18.0, 2.0)


def test_a_wrong_typed_copy_is_judged_at_its_digits(tmp_path: Path) -> None:
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    b0, b1 = (float(v) for v in fit.params)
    assert round(b1, 3) == 0.989 and round(b0, 3) == 1.146  # the label's figures at 3 decimals
    path = _simple(
        tmp_path / "wrong.xlsx",
        Y,
        {"C2": "=(0.899*$A2)+1.146", "C3": "=(0.899*$A3)+1.146", "E2": "=ROUND(B2,1)"},
    )
    regression = _audit(path).regressions[0]
    slope, intercept = regression.reported["slope"], regression.reported["intercept"]
    assert (slope.cell, slope.value, slope.verdict) == ("Kiln Log!C2", 0.899, "mismatch")
    assert (intercept.cell, intercept.value, intercept.verdict) == (
        "Kiln Log!C2",
        1.146,
        "confirmed",
    )
    assert slope.intended == pytest.approx(b1, rel=1e-12)
    assert len(regression.reported) == 2  # C3 repeats C2; E2's 1 is no copy of anything
    assert any(f.cells == ["Kiln Log!C2"] and f.severity == "major" for f in regression.findings)


def test_a_typed_r_squared_and_an_inverse_prediction_are_copies(tmp_path: Path) -> None:
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    r_squared = round(float(fit.rsquared), 4)
    path = _simple(
        tmp_path / "inverse.xlsx", Y, {"D2": "=(B2-1.1464)/0.98929"}, numbers={"E2": r_squared}
    )
    regression = _audit(path).regressions[0]
    found = {(k.split("@")[0], v.cell, v.value, v.verdict) for k, v in regression.reported.items()}
    assert found == {
        ("slope", "Kiln Log!D2", 0.98929, "confirmed"),
        ("intercept", "Kiln Log!D2", 1.1464, "confirmed"),
        ("r_squared", "Kiln Log!E2", r_squared, "confirmed"),
    }


def test_a_short_slope_typed_beside_its_intercept_and_r_squared_is_a_copy(
    tmp_path: Path,
) -> None:
    """0.989 alone (three digits) could be a coincidence; typed in the block of the matching
    intercept and R² (four digits each) it is the label's slope."""
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    slope, intercept = round(float(fit.params[1]), 3), round(float(fit.params[0]), 4)
    r_squared = round(float(fit.rsquared), 4)
    assert slope == 0.989  # statsmodels: the slope at three significant digits
    numbers = {"E2": slope, "E3": intercept, "E4": r_squared}
    path = _simple(tmp_path / "block.xlsx", Y, {}, numbers=numbers)
    regression = _audit(path).regressions[0]
    found = {(k, v.cell, v.verdict) for k, v in regression.reported.items()}
    assert found == {
        ("slope", "Kiln Log!E2", "confirmed"),
        ("intercept", "Kiln Log!E3", "confirmed"),
        ("r_squared", "Kiln Log!E4", "confirmed"),
    }
    alone = _simple(tmp_path / "alone.xlsx", Y, {}, numbers={"E2": slope})
    assert _audit(alone).regressions[0].reported == {}  # three digits alone: not enough


def test_a_label_copied_as_text_is_read_figure_by_figure(tmp_path: Path) -> None:
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    assert round(float(fit.rsquared), 4) == 0.9985  # statsmodels: R² of Y on x
    book = tmp_path / "text.xlsx"
    _simple(book, Y, {})
    parts = read_parts(book)
    sheet = parts["xl/worksheets/sheet1.xml"].decode("utf-8")
    label = "Fit: y = 0.9893x + 1.1646 (R² = 0.9985)"  # intercept digits swapped: 1.1464
    cell = f'<c r="H2" t="inlineStr"><is><t>{label}</t></is></c>'
    sheet = re.sub(r'(<row r="2"[^>]*>.*?)(</row>)', rf"\1{cell}\2", sheet, count=1, flags=re.S)
    parts["xl/worksheets/sheet1.xml"] = sheet.encode("utf-8")
    regression = _audit(write_package(tmp_path / "text2.xlsx", dict(parts))).regressions[0]
    found = {(k, v.cell, v.value, v.verdict) for k, v in regression.reported.items()}
    assert found == {
        ("slope", "Kiln Log!H2", 0.9893, "confirmed"),
        ("intercept", "Kiln Log!H2", 1.1646, "mismatch"),
        ("r_squared", "Kiln Log!H2", 0.9985, "confirmed"),
    }


def test_x_and_y_of_different_lengths_are_flagged(tmp_path: Path) -> None:
    long_y = [*Y, 40.0, 41.5, 43.0]  # three more readings below the block
    path = _simple(tmp_path / "long.xlsx", long_y, {}, y_rows=len(long_y))
    regression = _audit(path).regressions[0]
    # LibreOffice draws and fits the first 8 pairs (checked by rendering such a chart)
    assert (regression.x_range, regression.y_range, regression.n) == (
        "Kiln Log!A2:A9",
        "Kiln Log!B2:B9",
        8,
    )
    (finding,) = [f for f in regression.findings if f.check == "trendline-series-length"]
    assert finding.severity == "major" and finding.kind == "series-length-mismatch"
    assert finding.cells == ["Kiln Log!B10", "Kiln Log!B11", "Kiln Log!B12"]
    assert finding.evidence == {
        "x_range": "Kiln Log!A2:A9",
        "y_range": "Kiln Log!B2:B12",
        "x_values": 8,
        "y_values": 11,
        "pairs_fitted": 8,
        "extra_numbers": 3,
    }


def test_a_series_held_only_in_the_chart_is_fitted_from_its_cache(tmp_path: Path) -> None:
    path = _simple(tmp_path / "a.xlsx", Y, {})
    parts = read_parts(path)
    name = "xl/charts/chart1.xml"
    parts[name] = re.sub(
        r"<c:numRef><c:f>[^<]*</c:f><c:numCache>(.*?)</c:numCache></c:numRef>",
        r"<c:numLit>\1</c:numLit>",
        parts[name].decode("utf-8"),
        flags=re.S,
    ).encode("utf-8")
    regression = _audit(write_package(tmp_path / "lit.xlsx", dict(parts))).regressions[0]
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    assert (regression.x_range, regression.y_range) == (
        "x values cached in the chart",
        "y values cached in the chart",
    )
    assert regression.intended["slope"] == pytest.approx(float(fit.params[1]), rel=1e-12)
    assert regression.intended["intercept"] == pytest.approx(float(fit.params[0]), rel=1e-12)


@pytest.mark.parametrize(
    ("options", "words"),
    [
        ({"type": "polynomial", "order": 2}, "polynomial trendline of order 2"),
        ({"type": "exponential"}, "exponential trendline"),
        ({"type": "log"}, "logarithmic trendline"),
        ({"type": "power"}, "power trendline"),
        ({"type": "moving_average", "period": 3}, "moving-average trendline over 3 points"),
        ({"type": "linear", "intercept": 1.5}, "the intercept is fixed at 1.5"),
    ],
)
def test_trendlines_not_audited_are_listed(
    tmp_path: Path, options: dict[str, object], words: str
) -> None:
    book = xlsxwriter.Workbook(str(tmp_path / "other.xlsx"))
    sheet = book.add_worksheet("Kiln Log")
    sheet.write_column(0, 0, X.tolist())
    sheet.write_column(0, 1, Y)
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {
            "categories": "='Kiln Log'!$A$1:$A$8",
            "values": "='Kiln Log'!$B$1:$B$8",
            "trendline": options,
        }
    )
    sheet.insert_chart("F2", chart)
    book.close()
    result = audit_workbook(tmp_path / "other.xlsx", load_policy("general"))
    assert result.regressions == []
    notes = [f for f in result.findings if f.check == "trendline-not-audited"]
    assert len(notes) == 1 and words in notes[0].message and notes[0].severity == "info"
    if "intercept" in options:
        # through (0, 1.5): slope = Σx(y − 1.5)/Σx² (statsmodels OLS of y − 1.5 on x, no constant)
        slope = float(sm.OLS(np.array(Y) - 1.5, X.reshape(-1, 1)).fit().params[0])
        assert f"{slope:.6g}" in notes[0].message


def test_a_scatter_whose_x_cells_hold_text_is_fitted_against_positions(tmp_path: Path) -> None:
    book = xlsxwriter.Workbook(str(tmp_path / "text_x.xlsx"))
    sheet = book.add_worksheet("Kiln Log")
    sheet.write_column(0, 0, ["run A", *[f"{v:g} h" for v in X[1:]]])  # hours written as text
    sheet.write_column(0, 1, Y)
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {
            "categories": "='Kiln Log'!$A$1:$A$8",
            "values": "='Kiln Log'!$B$1:$B$8",
            "trendline": {"type": "linear"},
        }
    )
    sheet.insert_chart("F2", chart)
    book.close()
    (regression,) = _audit(tmp_path / "text_x.xlsx").regressions
    positions = np.arange(1.0, len(Y) + 1)
    fit = sm.OLS(np.array(Y), sm.add_constant(positions)).fit()
    assert (regression.x_range, regression.n) == ("Kiln Log!A1:A8", 8)
    assert regression.intended["slope"] == pytest.approx(float(fit.params[1]), rel=1e-12)
    (note,) = [f for f in regression.findings if f.check == "trendline-fits-positions"]
    assert "x cells hold text" in note.message and "positions 1..8" in note.message


def test_a_trendline_over_the_data_of_a_slope_formula_joins_that_regression(
    tmp_path: Path,
) -> None:
    long_y = [*Y, 40.0, 41.5]  # the chart's y runs two readings past the formula's rows
    path = _simple(tmp_path / "joined.xlsx", long_y, {"E2": "=SLOPE(B2:B9,A2:A9)"}, y_rows=10)
    (regression,) = _audit(path).regressions
    fit = sm.OLS(np.array(Y), sm.add_constant(X)).fit()
    assert (regression.found_by, regression.x_range, regression.y_range) == (
        "formulas",
        "Kiln Log!A2:A9",
        "Kiln Log!B2:B9",
    )
    assert regression.reported["slope"].cell == "Kiln Log!E2"
    assert regression.intended["slope"] == pytest.approx(float(fit.params[1]), rel=1e-12)
    (finding,) = [f for f in regression.findings if f.check == "trendline-series-length"]
    assert finding.cells == ["Kiln Log!B10", "Kiln Log!B11"]
