"""Roles from words (checks axis-words-swapped and axis-words-next-column) on generated variety.

The workbooks come from fixtures/words_scenarios.py: six invented topics (English, Spanish,
German; distinct units, and one pair sharing a unit), columns and rows, SLOPE family and
INDEX(LINEST), labels with rates (``Slope (L per t)``), with quantity names, titles only, generic
headers and contradicting words, planted clean, swapped or shifted. The expected numbers are the
scenario's own scipy ``linregress`` fits (outside reference), never regaudit's: the slope the
words describe, and whether the conclusion (p across 0.05 or the slope's sign) changes.
"""

from __future__ import annotations

import functools
import itertools
import json
import re
import shutil
import sys
import tempfile
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pytest
import xlsxwriter
from scipy import stats as sps

from auditor.checks.axis_support import mirrored, symmetric_only
from auditor.context import WorkbookContext
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Ref
from auditor.locate.spec import PairUse, RegressionSpec
from auditor.model import Finding, RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "fixtures"))
from words_scenarios import TOPICS, Scenario, Topic, write_scenario  # noqa: E402

CHECKS = ("axis-words-swapped", "axis-words-next-column")
SHARED_UNIT = TOPICS[5]  # Dose (mg/L) and Residual chlorine (mg/L): units say nothing
DISTINCT = TOPICS[:5]


def _variety(
    plant: str, words: tuple[str, ...], topics: tuple[Topic, ...], y_first: bool | None = None
) -> list[Scenario]:
    """Every topic with every wording; orientation, form and table order cycling (a seeded
    spread); ``y_first`` fixes the table order."""
    orders = (False, True) if y_first is None else (y_first,)
    shapes = itertools.cycle(
        itertools.product(("columns", "rows"), ("slope_family", "index_linest"), orders)
    )
    out = []
    for seed, (topic, wording) in enumerate(itertools.product(topics, words)):
        orientation, form, first = next(shapes)
        out.append(Scenario(topic, plant, wording, orientation, form, seed + 11, y_first=first))
    return out


@functools.cache
def _audited(group: str) -> list[tuple[Scenario, dict[str, Any], RegressionResult, list[Finding]]]:
    """One workbook per group, one sheet per scenario, audited; each truth with its result."""
    scenarios = GROUPS[group]
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / f"{group}.xlsx"
        book = xlsxwriter.Workbook(str(path))
        truths = [write_scenario(book, f"S{i}", s) for i, s in enumerate(scenarios)]
        book.close()
        result = audit_workbook(path, load_policy("general"))
    out = []
    for scenario, truth in zip(scenarios, truths, strict=True):
        match = [r for r in result.regressions if r.y_range == truth["y_range"]]
        assert len(match) == 1, (truth["y_range"], [r.y_range for r in result.regressions])
        mine = [f for f in match[0].findings if f.check in CHECKS]
        mine += [f for f in result.findings if f.check in CHECKS and truth["sheet"] in f.cells[0]]
        out.append((scenario, truth, match[0], mine))
    return out


GROUPS: dict[str, list[Scenario]] = {
    "swapped_units": _variety("swapped", ("rate", "names", "both", "unit", "slash"), DISTINCT)
    + _variety("swapped", ("names",), (SHARED_UNIT,)),
    "swapped_title": _variety("swapped", ("title",), DISTINCT, y_first=True),
    "swapped_conventions": _variety("swapped", ("title",), TOPICS, y_first=False),
    "shifted": _variety("shifted-y", ("rate", "names", "title", "slash"), DISTINCT)
    + _variety("shifted-x", ("rate", "names", "title"), DISTINCT),
    "shifted_title": _variety("shifted-y", ("loose-title",), DISTINCT),
    "clean": _variety("clean", ("rate", "names", "title", "both", "unit", "slash"), TOPICS),
    "ambiguous": _variety("swapped", ("generic", "contradict"), DISTINCT)
    + _variety("swapped", ("generic", "unit", "slash"), (SHARED_UNIT,))
    + _variety("swapped", ("rate",), (SHARED_UNIT,))
    + _variety("shifted-y", ("generic", "contradict"), DISTINCT),
}


def _close(a: object, b: float, rel: float = 1e-6) -> bool:
    return isinstance(a, float) and abs(a - b) <= rel * max(abs(a), abs(b))


def _ids(group: str) -> list[str]:
    return [
        f"{s.topic.language}-{s.topic.y[0]}-{s.words}-{s.orientation}-{s.form}"
        for s in GROUPS[group]
    ]


@pytest.mark.parametrize("index", range(len(GROUPS["swapped_units"])), ids=_ids("swapped_units"))
def test_a_consistent_swap_is_named_from_units_and_names(index: int) -> None:
    scenario, truth, result, findings = _audited("swapped_units")[index]
    assert [f.kind for f in findings] == ["xy-swapped"], [f.message for f in findings]
    finding = findings[0]
    assert finding.severity == "major"  # t and p are symmetric in x and y: never critical
    assert finding.cells[0] == truth["cells"]["slope"]
    # The slope the words describe: fuel on load, scipy's fit of the numbers written.
    assert _close(finding.evidence["slope_as_words_say"], truth["as_words_say"]["slope"])
    assert _close(finding.evidence["slope_as_written"], truth["as_written"]["slope"])
    x_name, y_name = scenario.topic.x[0], scenario.topic.y[0]
    assert f"'{x_name} ({scenario.topic.x[1]})' as x" in finding.message
    assert f"'{y_name} ({scenario.topic.y[1]})' as y" in finding.message
    assert result.reported["slope"].verdict == "confirmed"  # formulas alone see nothing wrong
    # The fix's slope formula reads the words' y (the formulas' x) against the words' x.
    x_cells, y_cells = (r.rpartition("!")[2] for r in (truth["x_range"], truth["y_range"]))
    assert f"=SLOPE({x_cells},{y_cells})" in finding.fix


@pytest.mark.parametrize("index", range(len(GROUPS["swapped_title"])), ids=_ids("swapped_title"))
def test_a_swap_only_a_title_says_is_a_minor_risk(index: int) -> None:
    _, truth, _, findings = _audited("swapped_title")[index]
    assert [(f.kind, f.severity) for f in findings] == [("xy-swapped", "minor")]
    assert "unverifiable" in findings[0].message
    assert _close(findings[0].evidence["slope_as_words_say"], truth["as_words_say"]["slope"])


@pytest.mark.parametrize(
    "index", range(len(GROUPS["swapped_conventions"])), ids=_ids("swapped_conventions")
)
def test_a_title_and_the_table_order_together_make_a_swap_major(index: int) -> None:
    """Two conventions (common practice): 'Fuel vs load' names y first, and the table puts
    load (x) before fuel; every formula fits load on fuel."""
    scenario, truth, _, findings = _audited("swapped_conventions")[index]
    assert [(f.kind, f.severity) for f in findings] == [("xy-swapped", "major")]
    assert "two conventions (common practice) agree" in findings[0].message
    assert _close(findings[0].evidence["slope_as_words_say"], truth["as_words_say"]["slope"])


@pytest.mark.parametrize("index", range(len(GROUPS["shifted"])), ids=_ids("shifted"))
def test_a_range_beside_the_named_one_is_named_and_its_fit_given(index: int) -> None:
    scenario, truth, _, findings = _audited("shifted")[index]
    assert [f.kind for f in findings] == ["range-shifted"], [f.message for f in findings]
    finding = findings[0]
    written, meant = truth["as_written"], truth["as_words_say"]
    changes = (written["p_slope"] < 0.05) != (meant["p_slope"] < 0.05) or (
        written["slope"] * meant["slope"] < 0
    )
    assert finding.severity == ("critical" if changes else "major")
    assert finding.evidence["range_meant"] == truth["words_range"]
    assert _close(finding.evidence["slope_as_words_say"], meant["slope"])
    assert _close(finding.evidence["p_as_words_say"], meant["p_slope"])
    assert finding.evidence["role"] == scenario.plant[-1]
    meant_cells = truth["words_range"].rpartition("!")[2]
    other = truth["x_range" if scenario.plant == "shifted-y" else "y_range"].rpartition("!")[2]
    slope = f"=SLOPE({meant_cells},{other})" if scenario.plant == "shifted-y" else (
        f"=SLOPE({other},{meant_cells})")  # fmt: skip
    assert slope in finding.fix


def test_the_shift_set_holds_conclusions_that_change_and_some_that_do_not() -> None:
    severities = {f.severity for _, _, _, found in _audited("shifted") for f in found}
    assert severities == {"critical", "major"}


@pytest.mark.parametrize("index", range(len(GROUPS["shifted_title"])), ids=_ids("shifted_title"))
def test_a_shift_only_a_titles_order_says_is_a_minor_risk(index: int) -> None:
    _, truth, _, findings = _audited("shifted_title")[index]
    assert [(f.kind, f.severity) for f in findings] == [("range-shifted", "minor")]
    assert findings[0].evidence["range_meant"] == truth["words_range"]


@pytest.mark.parametrize("group", ["clean", "ambiguous"])
def test_matching_or_ambiguous_words_draw_no_finding(group: str) -> None:
    audited = _audited(group)
    assert len(audited) >= 12
    assert [(s, [f.message for f in found]) for s, _, _, found in audited if found] == []


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
    ws.write(1, 4, "Slope")
    ws.write_formula(1, 5, "=SLOPE(B3:B12,A3:A12)", None, float(direct.slope))
    ws.write(6, 4, "Slope")
    ws.write_formula(6, 5, "=SLOPE(A3:A12,B3:B12)", None, float(inverse.slope))
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


def test_the_case_workbook_holds_what_libreoffice_computed() -> None:
    """fixtures/words/axis_words.xlsx was recalculated by LibreOffice: its stored slopes and
    p-values equal the scenario's scipy fits of the ranges the formulas read (truth.json), so
    the stored values the generated tests write are those a spreadsheet stores."""
    folder = ROOT / "fixtures" / "words"
    truth = json.loads((folder / "truth.json").read_text(encoding="utf-8"))
    book = openpyxl.load_workbook(folder / "axis_words.xlsx", data_only=True)
    for sheet, facts in truth.items():
        for key in ("slope", "p_slope"):
            cell = facts["cells"][key].rpartition("!")[2]
            stored = book[sheet][cell].value
            assert _close(float(stored), facts["as_written"][key], rel=1e-9), (sheet, key)


def test_the_fix_formulas_give_the_fit_the_words_describe() -> None:
    """Each finding on the case workbook suggests the slope formula the words describe: the
    project's evaluator computes it on the workbook and it equals scipy's fit (truth.json)."""
    path = ROOT / "fixtures" / "words" / "axis_words.xlsx"
    truth = json.loads((path.parent / "truth.json").read_text(encoding="utf-8"))
    evaluator = Evaluator(read_workbook(path))
    result = audit_workbook(path, load_policy("general"))
    checked = 0
    for finding in result.all_findings():
        if finding.check not in CHECKS:
            continue
        formula = re.search(r"=SLOPE\([^)]*\)", finding.fix)
        assert formula is not None, finding.fix
        sheet = finding.cells[0].rpartition("!")[0]
        value = evaluator.evaluate(formula.group(0), sheet)
        assert _close(value, truth[sheet]["as_words_say"]["slope"], rel=1e-9), sheet
        checked += 1
    assert checked == 5


@pytest.mark.optional
def test_libreoffice_recalculated_scenarios_draw_the_same_findings(tmp_path: Path) -> None:
    """The generated scenarios with their stored values recalculated by LibreOffice (an outside
    engine) draw the same findings, at the same severities, as with scipy's stored values."""
    if shutil.which("soffice") is None and shutil.which("libreoffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    from make_fixtures import recalculate  # noqa: PLC0415 (fixtures/, on the path above)

    groups = ("swapped_units", "shifted", "clean")
    written, done = tmp_path / "written", tmp_path / "done"
    written.mkdir()
    done.mkdir()
    for group in groups:
        book = xlsxwriter.Workbook(str(written / f"{group}.xlsx"))
        for i, scenario in enumerate(GROUPS[group]):
            write_scenario(book, f"S{i}", scenario)
        book.close()
    recalculate(sorted(written.glob("*.xlsx")), done, tmp_path)
    for group in groups:
        result = audit_workbook(done / f"{group}.xlsx", load_policy("general"))
        engine = sorted(
            (f.cells[0], f.kind, f.severity) for f in result.all_findings() if f.check in CHECKS
        )
        ours = sorted(
            (found[0].cells[0], found[0].kind, found[0].severity)
            for _, _, _, found in _audited(group)
            if found
        )
        assert engine == ours, group


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
    ws.write(1, 5, "Slope (1/x²)")
    ws.write_formula(1, 6, "=SLOPE(B3:B14,A3:A14)", None, float(fit.slope))
    ws.write(2, 5, "Intercept (1/x²)")
    ws.write_formula(2, 6, "=INTERCEPT(B3:B14,A3:A14)", None, float(fit.intercept))
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


# Quantities whose names and units overlap on purpose (shared words, shared units, prefixes,
# abbreviations), drawn at random into clean regressions: the words match the formulas, so no
# combination may draw a finding.
POOL = (
    ("Line speed", "m/min"), ("Line scrap", "%"), ("Scrap rate", "%"), ("Speed", "m/s"),
    ("Temp", "°C"), ("Temperature", "K"), ("Time", "min"), ("Time on line", "h"),
    ("Abs", "AU"), ("Absorbance", "AU"), ("Conc", "mg/L"), ("Concentration", "µg/L"),
    ("Flow", "L/s"), ("Flow rate", "L/min"), ("Load", "t"), ("Fuel", "L"), ("Day", "d"),
    ("Days stored", "d"), ("Height", "cm"), ("Shoot height", "mm"),
)  # fmt: skip


def _clean_topics(count: int) -> list[Scenario]:
    rng = np.random.default_rng(2026)
    words = ("rate", "names", "title", "both", "unit", "slash")
    out = []
    for i in range(count):
        x, y, z = (POOL[j] for j in rng.choice(len(POOL), 3, replace=False))
        topic = Topic("en" if i % 2 else "en2", x, y, z, (1, 20), float(rng.choice([-1, 1])),
                      5.0, 0.8, float(rng.uniform(-0.5, 0.5)), 10.0, 1.0)  # fmt: skip
        orientation = ("columns", "rows")[(i // 2) % 2]
        form = ("slope_family", "index_linest")[(i // 3) % 2]
        wording = words[i % len(words)]
        out.append(
            Scenario(topic, "clean", wording, orientation, form, 100 + i, y_first=i % 3 == 0)
        )
    return out


GROUPS["clean_overlapping"] = _clean_topics(48)


def test_clean_regressions_with_overlapping_names_and_units_draw_nothing() -> None:
    audited = _audited("clean_overlapping")
    found = [
        (s.topic.x, s.topic.y, s.words, [f.message for f in f_]) for s, _, _, f_ in audited if f_
    ]
    assert found == []


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
