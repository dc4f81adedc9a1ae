"""A shared formula's anchor parsed once and moved to each cell of its group (auditor.formula.moved,
auditor.locate.shared_parse, auditor.locate.cell_parses) gives, node for node, the tree a fresh
parse of the cell's own text gives.

Outside reference: the cell's text is ``SharedFormula.at``, proven equal to openpyxl's
``Translator`` in tests/read/test_shared_formulas.py; the fresh parse reads it without any cache.
Evidence: generated formulas of both generators (every kind of reference the translator tells
apart, names, sheet prefixes, whole columns and rows, calls, arrays, long chains) anchored at
random cells and moved to many places, and known groups whose corners cross as they move.
"""

from __future__ import annotations

import random

import pytest

from auditor.errors import FormulaError
from auditor.formula.moved import MovedTree
from auditor.formula.nodes import (
    Binary,
    Call,
    Number,
    Ref,
    RefNode,
    calls,
    moved_from,
    references,
    walk,
)
from auditor.formula.parser import _Context, _parse_now
from auditor.locate.cell_parses import CellParses
from auditor.locate.shared_parse import moved_tree
from auditor.locate.trendline_values import _signed
from auditor.locate.typed_copies import _factors
from auditor.read.shared_formulas import SharedFormula, SharedGroups
from auditor.read.workbook import Cell, Sheet, Workbook
from tests.formula.test_templates import _book, _shape
from tests.formula.test_templates import _formula as _nested_formula
from tests.read.test_shared_formulas import _formula as _reference_formula


def _anew(text: str, sheet: str, workbook: Workbook) -> list[tuple[object, ...]] | str:
    try:
        return _shape(_parse_now(_Context(text, sheet, workbook)))
    except FormulaError as exc:
        return str(exc)


def _texts(rng: random.Random, count: int) -> list[str]:
    sheets = ["Data", "Fit", "Sensor 1", "Elsewhere"]
    out = []
    for _ in range(count):
        if rng.random() < 0.5:
            out.append(_reference_formula(rng))
        else:
            out.append("=" + _nested_formula(rng, sheets))
    return out


@pytest.mark.parametrize("seed", range(6))
def test_a_moved_tree_is_the_moved_texts_parse(seed: int) -> None:
    rng = random.Random(seed)
    workbook = _book(rng)
    sheet = rng.choice(list(workbook.sheets))
    moved = compared = 0
    for text in _texts(rng, 250):
        row, col = rng.randint(1, 50), rng.randint(1, 60)
        try:
            group = SharedFormula(text, row, col)
        except Exception:  # not tokenised: the reader refuses such a file
            continue
        tree = moved_tree(group, sheet, workbook)
        if tree is None:
            continue
        moved += 1
        for _ in range(5):
            to_row = max(1, row + rng.choice([-60, -3, -1, 0, 1, 7, 1000]))
            to_col = min(16384, max(1, col + rng.choice([-70, -2, 0, 1, 5])))
            try:
                there = group.at(to_row, to_col)
            except Exception:  # off the sheet: no cell of the group is there
                continue
            node = tree.at(to_row - row, to_col - col)
            assert _shape(node) == _anew(there, sheet, workbook), (text, row, col, to_row, to_col)
            # The references it carries from its making are those a walk of it finds.
            assert references(node) == [n.ref for n in walk(node) if isinstance(n, RefNode)]
            # Its maker marks it; the literals, factors and call names (the copies and the pair
            # search key them by maker) are the anchor's own.
            assert moved_from(node) is tree
            assert list(_signed(node, 1.0)) == list(_signed(tree.node, 1.0))
            assert _factors(node) == _factors(tree.node)
            assert [c.name for c in calls(node)] == [c.name for c in calls(tree.node)]
            compared += 1
    assert moved > 40 and compared > 150, (moved, compared)


def test_corners_that_cross_as_they_move() -> None:
    """``SUM($A$5:A3)`` filled down: the relative corner passes the fixed one."""
    group = SharedFormula("=SUM($A$5:A3)*2", 3, 2)
    workbook = Workbook("mem.xlsx", "", {"S": Sheet("S", max_row=20, max_col=3)}, [], True)
    tree = moved_tree(group, "S", workbook)
    assert isinstance(tree, MovedTree)
    assert tree.at(0, 0) == Binary("*", Call("SUM", (RefNode(Ref("S", 3, 1, 5, 1)),)), Number(2.0))
    assert tree.at(6, 0) == Binary("*", Call("SUM", (RefNode(Ref("S", 5, 1, 9, 1)),)), Number(2.0))
    assert group.at(9, 2) == "=SUM($A$5:A9)*2"
    assert tree.at(6, 1) == Binary("*", Call("SUM", (RefNode(Ref("S", 5, 1, 9, 2)),)), Number(2.0))


@pytest.mark.parametrize(
    ("text", "moved"),
    [
        ("=SUM(B:B)+B2", False),  # a whole column moves: not a block of cells
        ("=Data!A1:Data!B2+B2", False),  # openpyxl moves only the last corner
        ("=Data!rate*B2", False),  # openpyxl moves the name without its sheet
        ('="fixed"', False),  # nothing moves: the text's one parse serves
        ("=Rate*B2+$C$1", True),  # a name and a fixed cell stay put
        ("=B2:INDEX($C$1:$C$9,3)+B2", True),  # a function glued to a range stays put
    ],
)
def test_groups_moved_or_parsed_cell_by_cell(text: str, moved: bool) -> None:
    """Each cell's parse is its text's, whether its group moves a tree or not."""
    rng = random.Random(3)
    workbook = _book(rng)
    sheet = next(iter(workbook.sheets))
    group = SharedFormula(text, 2, 4)
    for row in range(2, 9):
        group.include(row, 4)
    workbook.sheets[sheet].shared = SharedGroups([group])
    parses = CellParses(workbook)
    for row in range(2, 9):
        there = group.at(row, 4)
        assert _shape(parses.parse(Cell(sheet, row, 4, None, there), there)) == _anew(
            there, sheet, workbook
        )
    assert (moved_tree(group, sheet, workbook) is not None) is moved


def test_a_sheets_cells_through_their_groups() -> None:
    """Cells of two groups, one cell written over inside a block and a formula of its own:
    each parse is its text's, and the moved ones are kept for later callers."""
    workbook = Workbook("mem.xlsx", "", {"S": Sheet("S", max_row=40, max_col=6)}, [], True)
    down = SharedFormula("=B2*2+SUM($B$2:B2)", 2, 1)
    right = SharedFormula("=B2+C$1", 2, 3)
    for row in range(2, 30):
        down.include(row, 1)
    for col in range(3, 6):
        right.include(2, col)
    workbook.sheets["S"].shared = SharedGroups([down, right])
    parses = CellParses(workbook)
    texts = {(row, 1): down.at(row, 1) for row in range(2, 30)}
    texts |= {(2, col): right.at(2, col) for col in range(3, 6)}
    texts[(9, 1)] = "=B9*3"  # written over
    texts[(35, 2)] = "=A35-1"  # no group
    for (row, col), text in texts.items():
        node = parses.parse(Cell("S", row, col, None, text), text)
        assert _shape(node) == _anew(text, "S", workbook), (row, col)
        assert parses.cache[(text, "S")] is node
    assert parses.parse(Cell("S", 20, 1, None, "=B20*2+SUM($B$2:B20)"), "=B20*2+SUM($B$2:B20)") == (
        Binary(
            "+",
            Binary("*", RefNode(Ref("S", 20, 2, 20, 2)), Number(2.0)),
            Call("SUM", (RefNode(Ref("S", 2, 2, 20, 2)),)),
        )
    )
