"""Formulas spelt out cell by cell, one shape in R1C1 terms, parsed once and moved
(auditor.locate.cell_parses): each cell's tree is, node for node, a fresh parse of its own text.

Outside reference: the texts are openpyxl's ``Translator`` moves of generated formulas
(``SharedFormula.at``, proven equal to it in tests/read/test_shared_formulas.py), and the fresh
parse reads each text without any cache. Evidence: generated formulas of both generators moved
to many cells of a sheet with no shared-formula group, mixed with texts of the same shape that
are not the same formula (a string spelling a cell, lower-case references).
"""

from __future__ import annotations

import random

import pytest

from auditor.errors import FormulaError
from auditor.formula import templates
from auditor.formula.nodes import Binary, Number, Ref, RefNode, moved_from
from auditor.locate.cell_parses import CellParses, _Anchored, shape
from auditor.read.shared_formulas import SharedFormula
from auditor.read.workbook import Cell, Sheet, Workbook
from tests.formula.test_templates import _book, _shape
from tests.locate.test_shared_parse import _anew, _texts


@pytest.fixture(autouse=True)
def _no_templates() -> None:
    """A text parsed on another sheet by an earlier test is rebound, not moved: start clean."""
    templates.clear()


def test_the_shape_of_a_formula() -> None:
    assert shape("=B3*2+SUM($B$2:B3)", 3, 1) == "=<1,0>*2+SUM(<$B,$2>:<1,0>)"
    assert shape("=B4*2+SUM($B$2:B4)", 4, 1) == shape("=B3*2+SUM($B$2:B3)", 3, 1)
    assert shape("=C$1+$A2", 2, 3) == "=<0,$1>+<$A,0>"
    assert shape("=SUM(rate)", 2, 2) is None


@pytest.mark.parametrize("seed", range(4))
def test_cells_of_one_shape_get_their_own_texts_parse(seed: int) -> None:
    rng = random.Random(seed)
    workbook = _book(rng)
    sheet = rng.choice(list(workbook.sheets))
    cells: list[tuple[int, int, str]] = []
    for number, text in enumerate(_texts(rng, 120)):
        col = 1 + number % 40
        try:
            group = SharedFormula(text, 2, col)
        except Exception:  # not tokenised: no cell holds it
            continue
        for row in range(2, 2 + rng.randint(1, 6)):
            try:
                cells.append((row, col, group.at(row, col)))
            except Exception:  # off the sheet
                continue
    # Same shape, not the same formula: a string spelling the cell, a lower-case reference.
    cells += [(row, 50, f'="B{row}"&B{row}') for row in range(2, 6)]
    cells += [(6, 50, '="B2"&B6'), (7, 50, "=b7*2"), (8, 50, "=B8*2"), (9, 50, "=B9*2")]
    rng.shuffle(cells)
    parses = CellParses(workbook)
    for row, col, text in cells:
        got = parses.parse(Cell(sheet, row, col, None, text), text)
        assert _shape(got) == _anew(text, sheet, workbook), (row, col, text)
    anchored = [e for e in parses._shapes.values() if isinstance(e, _Anchored)]
    assert len(anchored) > 20, len(anchored)


def test_a_column_spelt_out() -> None:
    workbook = Workbook("mem.xlsx", "", {"S": Sheet("S", max_row=40, max_col=6)}, [], True)
    parses = CellParses(workbook)
    for row in range(2, 30):
        text = f"=B{row}*2"
        node = parses.parse(Cell("S", row, 3, None, text), text)
        assert node == Binary("*", RefNode(Ref("S", row, 2, row, 2)), Number(2.0))
        # The first two are parsed as they are; the first anchors the rest.
        assert (moved_from(node) is None) is (row < 4)
    assert isinstance(parses._shapes[("S", "=<-1,0>*2")], _Anchored)
    for row in (2, 3):  # a shape of two cells: both parsed, no anchor made
        parses.parse(Cell("S", row, 6, None, f"=B{row}+1"), f"=B{row}+1")
    assert parses._shapes[("S", "=<-4,0>+1")] == ("=B2+1", 2, 6)
    # A shape whose first cell cannot be moved as a block (a whole column moves with it):
    # each cell parsed from its own text.
    for row in range(2, 5):
        text = f"=SUM(B:B)+B{row}"
        assert _shape(parses.parse(Cell("S", row, 4, None, text), text)) == _anew(
            text, "S", workbook
        )
    assert parses._shapes[("S", "=SUM(B:B)+<-2,0>")] is None


def test_texts_of_a_shape_that_are_not_its_formula() -> None:
    """A lower-case reference the shape does not count moves off the sheet at another cell of
    the shape; text the tokenizer refuses has a shape too. Each is parsed from its text (or
    fails as its parse fails)."""
    workbook = Workbook("mem.xlsx", "", {"S": Sheet("S", max_row=40, max_col=6)}, [], True)
    parses = CellParses(workbook)
    for row in (5, 6, 2):
        text = f"=b1+A{row}"
        assert _shape(parses.parse(Cell("S", row, 2, None, text), text)) == _anew(
            text, "S", workbook
        )
    assert isinstance(parses._shapes[("S", "=b1+<-1,0>")], _Anchored)
    for row in (2, 3, 4):
        text = f"=A{row})"
        with pytest.raises(FormulaError):
            parses.parse(Cell("S", row, 3, None, text), text)
    assert parses._shapes[("S", "=<-2,0>)")] is None


def test_a_text_parsed_on_another_sheet_is_rebound() -> None:
    sheets = {name: Sheet(name, max_row=40, max_col=6) for name in ("S", "T")}
    workbook = Workbook("mem.xlsx", "", sheets, [], True)
    parses = CellParses(workbook)
    for row in (2, 3):
        parses.parse(Cell("S", row, 3, None, f"=B{row}*2"), f"=B{row}*2")
    assert parses.parse(Cell("T", 2, 3, None, "=B2*2"), "=B2*2") == Binary(
        "*", RefNode(Ref("T", 2, 2, 2, 2)), Number(2.0)
    )
    assert ("T", "=<-1,0>*2") not in parses._shapes  # the template served


def test_formulas_alike_but_for_their_references() -> None:
    """Texts that differ only where they name cells, in two shapes: each shape's first cell
    anchors the cells of its own shape only (from the shape's third cell on)."""
    workbook = Workbook("mem.xlsx", "", {"S": Sheet("S", max_row=40, max_col=6)}, [], True)
    parses = CellParses(workbook)
    texts = {2: "=B2*$A$1", 3: "=B3*$A$2", 4: "=B4*$A$1", 5: "=B5*$A$2", 6: "=B6*$A$1"}
    texts |= {7: "=B7*$A$2", 8: "=B8*$A$2"}
    for row, text in texts.items():
        assert _shape(parses.parse(Cell("S", row, 3, None, text), text)) == _anew(
            text, "S", workbook
        )
    assert isinstance(parses._shapes[("S", "=<-1,0>*<$A,$1>")], _Anchored)
    assert isinstance(parses._shapes[("S", "=<-1,0>*<$A,$2>")], _Anchored)
    assert parses._shapes[("S", "=<-1,0>*<$A,$1>")].group.row == 2  # type: ignore[union-attr]
