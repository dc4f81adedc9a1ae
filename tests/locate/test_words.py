"""Reading words into roles (auditor.locate.words, auditor.diagnose.roles_words).

The expected readings are what the words say in plain language (a slope in "L per t" is litres
per tonne: y in litres, x in tonnes); the scenarios are invented.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xlsxwriter
from scipy import stats as sps

from auditor.diagnose.roles_words import contradictory, judge_shift, judge_swap, points_at
from auditor.formula.syntax import Ref
from auditor.locate.meaning import Header, Meaning, header_of
from auditor.locate.words import (
    Statement,
    akin,
    read_slash_rate,
    read_statement,
    read_unit,
    same_word,
    tokens,
    units_of,
)
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("Fuel (L)", {"fuel", "l"}),
        ("Temp. (℃)", {"temp", "°c"}),  # NFKC: the one-character degree Celsius sign
        ("Standard (µg/L)", {"standard", "ug/l"}),  # micro sign and Greek mu alike
        ("Glue-line temp", {"glue", "line", "temp"}),
        ("Leaf counts, week 3", {"leaf", "count", "week"}),  # plural s, numbers dropped
        ("x", set()),
        ("Value of y", set()),
    ],
)
def test_tokens(text: str, words: set[str]) -> None:
    assert tokens(text) == words


def test_same_word_takes_prefixes_of_four_letters_only() -> None:
    assert same_word("temp", "temperature")
    assert same_word("conc", "concentration")
    assert not same_word("t", "time")  # a unit letter is no abbreviation
    assert not same_word("min", "mineral")
    # Looser, only to hold a finding back: three letters may abbreviate.
    assert akin(frozenset({"abs"}), frozenset({"absorbance", "au"}))
    assert not akin(frozenset({"t"}), frozenset({"time"}))


@pytest.mark.parametrize(
    ("text", "rate", "y", "x"),
    [
        ("Slope (L fuel per t load)", True, {"l", "fuel"}, {"t", "load"}),
        ("Slope kWh per °C", True, {"kwh"}, {"°c"}),  # no bracket: the word before "per"
        ("Pendiente (NTU por L/s)", True, {"ntu"}, {"l/s"}),
        ("Steigung (NTU pro L/s)", True, {"ntu"}, {"l/s"}),
        ("Pente (mg / h)", True, {"mg"}, {"h"}),  # a spaced slash is a rate
        ("Fuel vs load", False, {"fuel"}, {"load"}),
        ("Line 3: scrap rate against line speed", False, {"scrap", "rate"}, {"line", "speed"}),
        ("Yield as a function of dose (mg)", False, {"yield"}, {"dose", "mg"}),
        ("Turbidez en función del caudal", False, {"turbidez"}, {"caudal"}),
        ("Trübung gegen Durchfluss", False, {"trübung"}, {"durchfluss"}),
        ("Site 4 — Turbidity vs flow", False, {"site", "turbidity"}, {"flow"}),
        ("Torbidità in funzione della portata", False, {"torbidità"}, {"portata"}),
        ("Troebelheid als functie van debiet", False, {"troebelheid"}, {"debiet"}),
        ("Turbidez em função da vazão", False, {"turbidez"}, {"vazão"}),
    ],
)
def test_statements(text: str, rate: bool, y: set[str], x: set[str]) -> None:
    statement = read_statement(text, "A1", rate)
    assert statement is not None
    assert (statement.y_words, statement.x_words) == (y, x)


@pytest.mark.parametrize(
    ("text", "rate"),
    [("Slope (mg/L)", True), ("Slope per 100", True), ("Fuel use", False), ("Slope", True)],
)
def test_words_without_roles(text: str, rate: bool) -> None:
    statement = read_statement(text, "A1", rate)
    assert statement is None or not (statement.y_words or statement.x_words)


@pytest.mark.parametrize(
    ("text", "y"),
    [("Intercept (NTU)", {"ntu"}), ("Ordenada al origen [L]", {"l"}), ("s (mg/L)", {"mg/l"}),
     ("Intercept", None), ("Intercept (b0)", {"b0"}), ("Intercept (NTU per L/s)", None),
     ("Intercept (x = 0)", None)],
)  # fmt: skip
def test_units_of_statistics_in_y(text: str, y: set[str] | None) -> None:
    statement = read_unit(text, "A1")
    assert (statement.y_words if statement else None) == y
    assert statement is None or (statement.factual and not statement.x_words)


@pytest.mark.parametrize(
    ("text", "y", "x"),
    [("Slope (kWh/°C)", {"kwh"}, {"°c"}), ("Slope (NTU/L/s)", {"ntu"}, {"l/s"}),
     ("Slope (L/s/mg/L)", {"l/s"}, {"mg/l"}), ("Slope (mg/L/h)", None, None),
     ("Slope (kWh/m)", None, None), ("Slope", None, None)],
)  # fmt: skip
def test_slash_rates_split_where_both_sides_are_units_of_the_table(
    text: str, y: set[str] | None, x: set[str] | None
) -> None:
    """Headers in kWh, °C, NTU, L/s, mg/L, h, mg and L/h: 'L/s/mg/L' splits one way only
    (L/s | mg/L); 'mg/L/h' two (mg/L | h and mg | L/h), so it is not read."""
    headers = ("Energy (kWh)", "Temp (°C)", "Turbidity (NTU)", "Flow (L/s)", "Conc (mg/L)",
               "Time (h)", "Mass (mg)", "Rate (L/h)")  # fmt: skip
    units = [units_of(h) for h in headers]
    statement = read_slash_rate(text, "A1", units)
    read = (statement.y_words, statement.x_words) if statement else (None, None)
    assert read == (y, x)


def _header(text: str, col: int) -> Header:
    return Header(text, f"S!{chr(64 + col)}1", Ref("S", 2, col, 9, col), tokens(text))


def test_shared_units_point_nowhere() -> None:
    dose, chlorine = _header("Dose (mg/L)", 1), _header("Residual chlorine (mg/L)", 2)
    assert points_at(frozenset({"mg/l"}), [dose, chlorine]) is None
    said = points_at(frozenset({"chlorine"}), [dose, chlorine])
    assert said is not None and said[0] is chlorine


def test_contradicting_words_are_no_evidence() -> None:
    load, fuel = _header("Load (t)", 1), _header("Fuel (L)", 2)
    agree = Statement("Slope (t per L)", "S!E2", "rate", frozenset({"t"}), frozenset({"l"}))
    other = Statement("Fuel vs load", "S!A1", "title", frozenset({"fuel"}), frozenset({"load"}))
    meaning = Meaning(x=fuel, y=load, statements=[agree, other])  # formulas: load on fuel
    assert contradictory(meaning)
    assert judge_swap(meaning) is None and judge_shift(meaning) is None
    # The title alone: one convention (y first) is weak ...
    fuel_first = Meaning(x=_header("Fuel (L)", 1), y=_header("Load (t)", 2), statements=[other])
    judgement = judge_swap(fuel_first)
    assert judgement is not None and not judgement.strong
    assert len(judgement.conventions) == 1
    # ... with the table's order (load, the words' x, left of fuel) two conventions agree.
    judgement = judge_swap(Meaning(x=fuel, y=load, statements=[other]))
    assert judgement is not None and judgement.strong
    assert (
        judgement.conventions[1] == "the table puts 'Load (t)' (x by the words) left of 'Fuel (L)'"
    )


def test_words_naming_a_range_another_regression_reads_are_not_a_shift(tmp_path: Path) -> None:
    """A sheet titled for one of its two regressions: the other is not shifted."""
    rng = np.random.default_rng(21)
    flow = np.linspace(2.0, 40.0, 10)
    turbidity = 1.4 + 0.21 * flow + rng.normal(0, 0.9, 10)
    chlorine = 0.8 + rng.normal(0, 0.1, 10)
    path = tmp_path / "works.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("Works")
    ws.write(0, 0, "Turbidity vs flow")
    for col, (header, values) in enumerate(
        (("Flow (L/s)", flow), ("Turbidity (NTU)", turbidity), ("Chlorine (mg/L)", chlorine))
    ):
        ws.write(1, col, header)
        ws.write_column(2, col, [float(v) for v in values])
    for row, (ys, values) in enumerate((("B3:B12", turbidity), ("C3:C12", chlorine))):
        fit = sps.linregress(flow, values)  # stored as a spreadsheet stores it (scipy)
        ws.write(1 + 3 * row, 5, "Slope")
        ws.write_formula(1 + 3 * row, 6, f"=SLOPE({ys},A3:A12)", None, float(fit.slope))
        ws.write(2 + 3 * row, 5, "p-value")
        p = f"=T.DIST.2T(ABS(G{2 + 3 * row}/(STEYX({ys},A3:A12)/SQRT(DEVSQ(A3:A12)))),8)"
        ws.write_formula(2 + 3 * row, 6, p, None, float(fit.pvalue))
    book.close()
    result = audit_workbook(path, load_policy("general"))
    assert len(result.regressions) == 2
    found = [f for f in result.all_findings() if f.check.startswith("axis-words")]
    assert found == []


def test_a_row_of_units_under_the_names_is_read_with_them(tmp_path: Path) -> None:
    path = tmp_path / "units.xlsx"
    book = xlsxwriter.Workbook(str(path))
    ws = book.add_worksheet("Log")
    ws.write_row(0, 0, ["Load", "Fuel"])
    ws.write_row(1, 0, ["(t)", "[L]"])
    ws.write_column(2, 0, [2.0, 5.0, 9.0, 14.0])
    ws.write_column(2, 1, [4.0, 7.5, 11.0, 15.0])
    book.close()
    workbook = read_workbook(path)
    load = header_of(workbook, Ref("Log", 3, 1, 6, 1))
    fuel = header_of(workbook, Ref("Log", 3, 2, 6, 2))
    assert load is not None and fuel is not None
    assert (load.text, load.words, load.cell) == ("Load (t)", {"load", "t"}, "Log!A2")
    assert (fuel.text, fuel.words) == ("Fuel [L]", {"fuel", "l"})


def test_a_statement_read_again_elsewhere_names_its_own_cell() -> None:
    """The words of a text are read once (memoised); each statement keeps the cell it is in."""
    first = read_statement("Slope (NTU per L/s)", "Fit!D1", rate=True)
    again = read_statement("Slope (NTU per L/s)", "Other!B9", rate=True)
    assert first is not None and again is not None
    assert (first.cell, again.cell) == ("Fit!D1", "Other!B9")
    assert first.y_words == again.y_words == frozenset({"ntu"})
    assert first.x_words == again.x_words == frozenset({"l/s"})
    assert read_statement("Slope (NTU per L/s)", "Fit!D1", rate=False) is None  # no title
