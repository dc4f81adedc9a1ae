"""The prediction cells indexed by the slope cell they multiply or divide by
(``auditor.design.prediction_index``) are the cells a walk over every formula finds, on
generated formulas: products and quotients by one cell or another, on this sheet or another,
calls that predict and calls that do not, a slope cell as numerator (no prediction shape)."""

from __future__ import annotations

import random
from pathlib import Path

import pytest
import xlsxwriter

from auditor.design.prediction_index import PredictionCells
from auditor.design.prediction_refs import is_cell, other_operand
from auditor.formula.syntax import Binary, Call, Node, parse, walk
from auditor.locate.locator import Locator
from auditor.read.open import read_workbook

SHEETS = ("Fit", "Samples")
TEMPLATES = (
    "={a}*{b}+{c}",
    "=({a}-{c})/{b}",
    "={b}/{a}",
    "=SUM({a},{b})",
    "=FORECAST({a},B2:B9,A2:A9)",
    "=TREND(B2:B9,A2:A9,{a})",
    "=ROUND({a}*2,3)",
    "=SLOPE(B2:B9,A2:A9)",
    "=IF({a}>0,{b}*{c},0)",
)


def _cell(rng: random.Random) -> str:
    sheet = rng.choice(SHEETS + ("",))
    return f"{sheet + '!' if sheet else ''}{rng.choice('DEF')}{rng.randint(1, 4)}"


def _formulas(seed: int) -> dict[tuple[str, int, int], Node]:
    rng = random.Random(seed)
    parsed = {}
    for row in range(1, rng.randint(5, 40)):
        text = rng.choice(TEMPLATES).format(a=_cell(rng), b=_cell(rng), c=_cell(rng))
        sheet = rng.choice(SHEETS)
        parsed[(sheet, row, rng.randint(7, 9))] = parse(text, sheet)
    return parsed


def _plain(
    parsed: dict[tuple[str, int, int], Node], slopes: set[tuple[str, int, int]]
) -> list[tuple[str, int, int]]:
    """Every cell walked in full: a predicting call, a product with a slope cell as a factor or a
    quotient by a slope cell."""
    found = []
    for key, node in parsed.items():
        for sub in walk(node):
            predicting_call = isinstance(sub, Call) and sub.name in ("FORECAST", "TREND")
            product = (
                isinstance(sub, Binary) and sub.op == "*" and other_operand(sub, slopes) is not None
            )
            quotient = isinstance(sub, Binary) and sub.op == "/" and is_cell(sub.right, slopes)
            if predicting_call or product or quotient:
                found.append(key)
                break
    return found


@pytest.mark.parametrize("seed", range(80))
def test_indexed_cells_are_the_cells_a_full_walk_finds(seed: int) -> None:
    parsed = _formulas(seed)
    index = PredictionCells(parsed)
    rng = random.Random(seed + 1000)
    for _ in range(4):
        slopes = {
            (rng.choice(SHEETS).lower(), rng.randint(1, 4), rng.randint(4, 6))
            for _ in range(rng.randint(1, 2))
        }
        got = [key for key, _, _ in index.for_slopes(slopes)]
        assert got == _plain(parsed, slopes)  # the same cells, in the workbook's order


def _curve_book(path: Path, with_name: bool) -> Path:
    """Invented: a kiln's shrinkage against firing time, predicted at 12 h in the text and, in
    one variant, at 20 h through a defined name whose text holds the product."""
    book = xlsxwriter.Workbook(path)
    sheet = book.add_worksheet("Fit")
    sheet.write_row(0, 0, ["Firing (h)", "Shrinkage (%)"])
    for row in range(1, 9):
        sheet.write_row(row, 0, [row * 1.5, 0.8 + row * 0.31 + (row % 2) * 0.05])
    sheet.write_formula("E2", "=SLOPE(B2:B9,A2:A9)")
    sheet.write_formula("E3", "=INTERCEPT(B2:B9,A2:A9)")
    sheet.write_formula("F2", "=E3+E2*12")
    sheet.write_formula("F4", "=AVERAGE(B2:B9)")
    if with_name:
        book.define_name("at_twenty", "=Fit!$E$2*20")
        sheet.write_formula("F3", "=Fit!$E$3+at_twenty")
    book.close()
    return path


@pytest.mark.parametrize("with_name", [False, True])
def test_cells_skipped_by_their_text_hold_no_shape(tmp_path: Path, with_name: bool) -> None:
    workbook = read_workbook(_curve_book(tmp_path / "kiln.xlsx", with_name))
    parsed = Locator(workbook).parsed
    by_text = PredictionCells(parsed, workbook)
    every = PredictionCells(parsed)
    assert [c[0] for c in by_text.cells] == [c[0] for c in every.cells]
    got = [key for key, _, _ in by_text.for_slopes({("fit", 2, 5)})]
    assert got == [("Fit", 2, 6)] + ([("Fit", 3, 6)] if with_name else [])
