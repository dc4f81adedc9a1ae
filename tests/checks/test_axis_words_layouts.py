"""Roles from words on hand-made layouts: a chart trendline, an inverse fit beside the direct
one, RSQ alone, a results grid, and traps met on real workbooks (a weighting in brackets, an
abbreviated header, a column of predictions headed by a typed equation). Invented scenarios;
stored values are scipy's fits (outside reference), as a spreadsheet stores them.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import xlsxwriter
from scipy import stats as sps

from auditor.checks.axis_support import mirrored, symmetric_only
from auditor.context import WorkbookContext
from auditor.formula.syntax import Ref
from auditor.locate.spec import PairUse, RegressionSpec
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.workbook import Cell

CHECKS = ("axis-words-swapped", "axis-words-next-column")


def _stat(ws: Any, at: tuple[int, int], label: str, formula: str, stored: float) -> None:
    """A label and, right of it, a formula with the value a spreadsheet would store."""
    ws.write(at[0], at[1], label)
    ws.write_formula(at[0], at[1] + 1, formula, None, float(stored))


def _close(a: object, b: float, rel: float = 1e-6) -> bool:
    return isinstance(a, float) and abs(a - b) <= rel * max(abs(a), abs(b))


def _table(ws: Any, headers: list[str], columns: list[list[float]]) -> None:
    for col, (header, values) in enumerate(zip(headers, columns, strict=True)):
        ws.write(1, col, header)
        ws.write_column(2, col, values)


def test_a_chart_trendline_over_the_column_beside_is_named(tmp_path: Path) -> None:
    """A scatter chart titled 'Dissolved oxygen vs temperature' whose series reads the algal
    count beside the oxygen column: the finding belongs to the trendline's regression."""
    rng = np.random.default_rng(5)
    temperature = np.linspace(4.0, 26.0, 12)
    oxygen = 12.6 - 0.19 * temperature + rng.normal(0, 0.3, 12)
    algae = 900.0 + rng.normal(0, 120.0, 12)
    path = tmp_path / "river.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("River")
    headers = ["Temperature (°C)", "Dissolved oxygen (mg/L)", "Algal count (cells/mL)"]
    _table(ws, headers, [list(map(float, v)) for v in (temperature, oxygen, algae)])
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {"categories": ["River", 2, 0, 13, 0], "values": ["River", 2, 2, 13, 2],
         "trendline": {"type": "linear"}}
    )  # fmt: skip
    chart.set_title({"name": "Dissolved oxygen vs temperature"})
    ws.insert_chart("F2", chart)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    [regression] = [r for r in result.regressions if r.found_by == "trendline"]
    found = [f for f in regression.findings if f.check == "axis-words-next-column"]
    assert [f.kind for f in found] == ["range-shifted"]
    meant = sps.linregress(temperature, oxygen)  # outside reference: scipy
    written = sps.linregress(temperature, algae)
    assert _close(found[0].evidence["slope_as_words_say"], float(meant.slope))
    changes = (meant.pvalue < 0.05) != (written.pvalue < 0.05) or meant.slope * written.slope < 0
    assert found[0].severity == ("critical" if changes else "major")
    assert found[0].cells == [regression.y_range] == ["River!C3:C14"]


def _fuel_sheet(book: Any, name: str, title: str) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(8)
    load = np.linspace(2.0, 30.0, 10)
    fuel = 3.1 + 0.8 * load + rng.normal(0, 1.5, 10)
    ws = book.add_worksheet(name)
    ws.write(0, 0, title)
    _table(ws, ["Load (t)", "Fuel (L)"], [list(map(float, load)), list(map(float, fuel))])
    return load, fuel


def test_an_inverse_fit_beside_the_direct_one_is_not_a_swap(tmp_path: Path) -> None:
    """Fuel on load and, below it, load on fuel (to read a load back from fuel): the sheet
    title speaks for the first; the second is on purpose, not swapped."""
    path = tmp_path / "inverse.xlsx"
    book = xlsxwriter.Workbook(str(path))
    load, fuel = _fuel_sheet(book, "Trucks", "Fuel vs load")
    ws = book.get_worksheet_by_name("Trucks")
    direct, inverse = sps.linregress(load, fuel), sps.linregress(fuel, load)  # scipy
    _stat(ws, (1, 4), "Slope", "=SLOPE(B3:B12,A3:A12)", direct.slope)
    _stat(ws, (6, 4), "Slope", "=SLOPE(A3:A12,B3:B12)", inverse.slope)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert [f for f in result.all_findings() if f.check in CHECKS] == []


def test_roles_left_open_by_the_formulas() -> None:
    """The guards on their own: a pair read only through RSQ/CORREL, and a pair another
    regression fits the other way round."""
    load, fuel = Ref("T", 3, 1, 12, 1), Ref("T", 3, 2, 12, 2)
    cell = Cell("T", 2, 6, 0.5, "=RSQ(A3:A12,B3:B12)")
    correl_only = RegressionSpec("T/F2", "T", fuel, load, True, "formulas")
    correl_only.uses = [PairUse(cell, "RSQ", load, fuel)]
    assert symmetric_only(correl_only)
    correl_only.found_by = "hand-built"  # oriented by the hand-built slope beside it
    assert not symmetric_only(correl_only)
    correl_only.found_by = "formulas"
    direct = RegressionSpec("T/F3", "T", load, fuel, True, "formulas")
    direct.uses = [PairUse(cell, "SLOPE", fuel, load)]
    assert not symmetric_only(direct)
    inverse = RegressionSpec("T/F9", "T", fuel, load, True, "formulas")
    inverse.uses = [PairUse(cell, "SLOPE", load, fuel)]
    context = WorkbookContext(stored_values=True, formula_count=2, specs=[direct, inverse])
    assert mirrored(context, direct) and mirrored(context, inverse)
    context.specs = [direct, correl_only]
    assert not mirrored(context, direct)  # a symmetric call fits no direction


def test_a_pair_read_only_through_rsq_has_no_roles_to_swap(tmp_path: Path) -> None:
    path = tmp_path / "rsq.xlsx"
    book = xlsxwriter.Workbook(str(path))
    load, fuel = _fuel_sheet(book, "Trucks", "Fuel vs load")
    ws = book.get_worksheet_by_name("Trucks")
    r = sps.linregress(load, fuel).rvalue  # scipy
    ws.write(1, 4, "Slope (L per t)")
    ws.write_formula(1, 5, "=SLOPE(B3:B12,A3:A12)", None, float(sps.linregress(load, fuel).slope))
    ws.write(2, 4, "R²")
    ws.write_formula(2, 5, "=RSQ(A3:A12,B3:B12)", None, float(r * r))  # x first: same value
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert [f for f in result.all_findings() if f.check in CHECKS] == []


def test_brackets_that_hold_no_unit_of_the_table_are_not_a_unit(tmp_path: Path) -> None:
    """A weighted curve: 'Intercept (1/x²)' names the weighting, and a column 'Weight 1/x²'
    sits beside the response. The bracket is no unit of any header: no shift is read."""
    level = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0], 2)
    response = 0.024 * level + 0.002 + np.random.default_rng(3).normal(0, 0.001, level.size)
    path = tmp_path / "weighted.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("Run 7")
    headers = ["Level (ng/mL)", "Peak area ratio", "Weight 1/x²"]
    _table(ws, headers, [list(map(float, level)), list(map(float, response)),
                         list(map(float, 1.0 / level**2))])  # fmt: skip
    fit = sps.linregress(level, response)  # stored as a spreadsheet stores it (scipy)
    _stat(ws, (1, 5), "Slope (1/x²)", "=SLOPE(B3:B14,A3:A14)", fit.slope)
    _stat(ws, (2, 5), "Intercept (1/x²)", "=INTERCEPT(B3:B14,A3:A14)", fit.intercept)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert len(result.regressions) == 1
    assert [f.message for f in result.all_findings() if f.check in CHECKS] == []


def test_an_abbreviated_header_may_be_the_quantity_the_words_name(tmp_path: Path) -> None:
    """'Abs' may abbreviate the absorbance the label names, beside a blank-corrected column:
    the words may name the range read, so no shift is claimed."""
    conc = np.array([0.0, 0.5, 1.0, 2.0, 4.0, 8.0])
    absorbance = 0.004 + 0.121 * conc + np.random.default_rng(9).normal(0, 0.003, conc.size)
    path = tmp_path / "photometer.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("Curve")
    headers = ["Conc (mg/L)", "Abs", "Absorbance, blank-corrected"]
    _table(ws, headers, [list(map(float, conc)), list(map(float, absorbance)),
                         list(map(float, absorbance - 0.004))])  # fmt: skip
    ws.write(1, 5, "Slope (absorbance per mg/L)")
    slope = float(sps.linregress(conc, absorbance).slope)  # scipy, stored as a spreadsheet would
    ws.write_formula(1, 6, "=SLOPE(B3:B8,A3:A8)", None, slope)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert [f.message for f in result.all_findings() if f.check in CHECKS] == []


def test_a_grid_of_statistics_lends_its_row_labels_to_every_column(tmp_path: Path) -> None:
    """A results sheet: statistics in rows labelled once in column A ('Slope (NTU per L/s)'),
    one site per column; site C's formulas fit flow on turbidity. The label's rate reaches the
    third column over the filled cells between (a fact: major, not a title's convention)."""
    rng = np.random.default_rng(12)
    path = tmp_path / "grid.xlsx"
    book = xlsxwriter.Workbook(str(path))
    data, results = book.add_worksheet("Data"), book.add_worksheet("Results")
    results.write_column(1, 0, ["Slope (NTU per L/s)", "Intercept (NTU)", "p-value"])
    truths = []
    for site in range(3):
        flow = np.round(np.linspace(2.0, 40.0, 10) + rng.uniform(-0.5, 0.5, 10), 2)
        turbidity = np.round(1.4 + 0.21 * flow + rng.normal(0, 0.9, 10), 3)
        c0 = 3 * site
        data.write_row(0, c0, ["Flow (L/s)", "Turbidity (NTU)"])
        data.write_column(1, c0, list(map(float, flow)))
        data.write_column(1, c0 + 1, list(map(float, turbidity)))
        xs, ys = (f"Data!{chr(65 + c0 + k)}2:{chr(65 + c0 + k)}11" for k in (0, 1))
        if site == 2:
            xs, ys = ys, xs  # every cell of site C fits flow on turbidity
        a, b = (turbidity, flow) if site == 2 else (flow, turbidity)
        fit = sps.linregress(a, b)  # stored as a spreadsheet stores it (scipy)
        col = chr(66 + site)
        results.write(0, 1 + site, f"Site {'ABC'[site]}")
        results.write_formula(1, 1 + site, f"=SLOPE({ys},{xs})", None, float(fit.slope))
        results.write_formula(2, 1 + site, f"=INTERCEPT({ys},{xs})", None, float(fit.intercept))
        p = f"=T.DIST.2T(ABS({col}2/(STEYX({ys},{xs})/SQRT(DEVSQ({xs})))),8)"
        results.write_formula(3, 1 + site, p, None, float(fit.pvalue))
        truths.append(sps.linregress(flow, turbidity))
    book.close()
    result = audit_workbook(path, load_policy("general"))
    found = [f for f in result.all_findings() if f.check in CHECKS]
    assert [(f.kind, f.severity, f.cells[0]) for f in found] == [
        ("xy-swapped", "major", "Results!D2")
    ]
    assert "'Slope (NTU per L/s)' (Results!A2)" in found[0].message
    assert _close(found[0].evidence["slope_as_words_say"], float(truths[2].slope))


def test_a_column_of_predictions_headed_by_the_typed_equation_says_no_roles(tmp_path: Path) -> None:
    """A column 'Predicted fuel (y = 0.8x + 3.1)' of =(0.8*$A3)+3.1 beside the data, typed from a
    chart's trendline: its header is a column's name and a typed equation, not words about the
    roles of another range; nothing is flagged."""
    rng = np.random.default_rng(17)
    load = np.round(np.linspace(2.0, 30.0, 10), 1)
    fuel = np.round(3.1 + 0.8 * load + rng.normal(0, 1.2, 10), 2)
    fit = sps.linregress(load, fuel)  # scipy
    b1, b0 = round(float(fit.slope), 4), round(float(fit.intercept), 3)
    path = tmp_path / "predicted.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("Trucks")
    ws.write_row(0, 0, ["Load (t)", "Fuel (L)", "", f"Predicted fuel (y = {b1}x + {b0})"])
    for i, (a, b) in enumerate(zip(load, fuel, strict=True)):
        ws.write_number(1 + i, 0, float(a))
        ws.write_number(1 + i, 1, float(b))
        ws.write_formula(1 + i, 3, f"=({b1}*$A{2 + i})+{b0}", None, b1 * float(a) + b0)
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {"categories": ["Trucks", 1, 0, 10, 0], "values": ["Trucks", 1, 1, 10, 1],
         "trendline": {"type": "linear", "display_equation": True}}
    )  # fmt: skip
    ws.insert_chart("F2", chart)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert result.regressions
    assert [f.message for f in result.all_findings() if f.check in CHECKS] == []


def test_a_chart_drawn_the_other_way_round_is_a_risk_when_no_value_is_reported(
    tmp_path: Path,
) -> None:
    """'Fuel vs load' over a scatter of load (values) against fuel (categories), the table
    listing load first: two conventions agree on a swap, but nothing reported depends on it."""
    path = tmp_path / "chart.xlsx"
    book = xlsxwriter.Workbook(str(path))
    load, fuel = _fuel_sheet(book, "Trucks", "Fuel vs load")
    chart = book.add_chart({"type": "scatter"})
    chart.add_series(
        {"categories": ["Trucks", 2, 1, 11, 1], "values": ["Trucks", 2, 0, 11, 0],
         "trendline": {"type": "linear"}}
    )  # fmt: skip
    chart.set_title({"name": "Fuel vs load"})
    book.get_worksheet_by_name("Trucks").insert_chart("E2", chart)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    [regression] = [r for r in result.regressions if r.found_by == "trendline"]
    found = [f for f in regression.findings if f.check in CHECKS]
    assert [(f.kind, f.severity) for f in found] == [("xy-swapped", "minor")]
    assert "No value reported here depends on the roles" in found[0].message
    assert _close(found[0].evidence["slope_as_words_say"], float(sps.linregress(load, fuel).slope))
