"""A block read with a whole column at once gives, cell for cell, what reading each cell as
formulas see it gives: generated sheets of every kind of typed value (floats, ints, numpy
scalars, text, logicals, error values, empty cells, formulas), in the dict store and in the
compact store, against the straightforward reading (``_constant`` of each cell, formulas
evaluated one cell at a time)."""

from __future__ import annotations

import random

import numpy as np
import pytest
from test_evaluate import book

from auditor.evaluation.coerce import _constant, constants
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Ref
from auditor.read.compact import CompactCells
from auditor.read.workbook import ErrorValue, Workbook

KINDS = ("float", "int", "numpy", "text", "bool", "error", "empty", "formula")


def _typed(rng: random.Random, kind: str, row: int) -> object:
    if kind == "float":
        return rng.uniform(-1e6, 1e6)
    if kind == "int":
        return rng.randrange(-1000, 1000)
    if kind == "numpy":
        return rng.choice([np.float64(rng.random()), np.int64(rng.randrange(9))])
    if kind == "text":
        return rng.choice(["n/a", "12.5", " ", "Total"])
    if kind == "bool":
        return rng.random() < 0.5
    if kind == "error":
        return ErrorValue(rng.choice(["#N/A", "#DIV/0!"]))
    if kind == "empty":
        return None
    return f"=A{row}*2" if row > 1 else "=1+1"


def _sheet_cells(rng: random.Random, rows: int, kinds: tuple[str, ...]) -> dict[str, object]:
    cells: dict[str, object] = {}
    for row in range(1, rows + 1):
        for letter in "ABC":
            value = _typed(rng, rng.choice(kinds), row)
            if value is not None:
                cells[f"{letter}{row}"] = value
    return cells


def _straightforward(workbook: Workbook, ref: Ref) -> list[list[object]]:
    """Each cell on its own: formulas through cell_value, constants through _constant."""
    evaluator = Evaluator(workbook)
    sheet = workbook.sheets[ref.sheet]
    out = []
    for row in range(ref.r1, ref.r2 + 1):
        line = []
        for col in range(ref.c1, ref.c2 + 1):
            cell = sheet.get(row, col)
            if cell is not None and cell.formula:
                line.append(evaluator.cell_value(ref.sheet, row, col))
            else:
                line.append(None if cell is None else _constant(cell.value))
        out.append(line)
    return out


def _compact(workbook: Workbook) -> Workbook:
    """The same workbook with each sheet held in the compact store."""
    for sheet in workbook.sheets.values():
        store = CompactCells(sheet.name)
        for (row, col), cell in sorted(sheet.cells.items()):
            if cell.formula is None and not isinstance(cell.value, np.generic):
                store.add_constant(row, col, cell.value, cell.number_format)
            else:
                store[(row, col)] = cell
        sheet.cells = store
    return workbook


def _same(a: list[list[object]], b: list[list[object]]) -> None:
    assert len(a) == len(b)
    for line_a, line_b in zip(a, b, strict=True):
        for x, y in zip(line_a, line_b, strict=True):
            assert type(x) is type(y) and x == y


@pytest.mark.parametrize("seed", range(12))
@pytest.mark.parametrize("store", ["dict", "compact"])
def test_a_block_holds_what_each_cell_holds(seed: int, store: str) -> None:
    rng = random.Random(seed)
    kinds = tuple(rng.sample(KINDS, rng.randrange(1, len(KINDS) + 1)))
    rows = rng.randrange(1, 60)
    cells = _sheet_cells(rng, rows, kinds)
    workbook = book(cells) if cells else book({"Z99": 1.0})
    if store == "compact":
        workbook = _compact(workbook)
    for ref in (
        Ref("Data", 1, 1, rows + 2, 3),
        Ref("Data", 2, 2, rows, 2),
        Ref("Data", 1, 3, 1, 3),
    ):
        if ref.r2 < ref.r1:
            continue
        block = Evaluator(workbook).range_values(ref)
        _same(block.tolist(), _straightforward(workbook, ref))


def test_constants_gives_floats_for_ints_and_numpy_scalars_and_keeps_the_rest() -> None:
    error = ErrorValue("#N/A")
    typed = [1.5, 2, np.float64(0.25), np.int64(3), "x", True, None, error]
    assert constants(typed) == [1.5, 2.0, 0.25, 3.0, "x", True, None, error]
    assert [type(v) for v in constants(typed)][:4] == [float] * 4  # ints become floats
    plain = [1.5, "x", None, False, error]
    assert constants(plain) is plain  # nothing to change: the list itself, not a copy
    assert constants([]) == []


def test_an_absent_cell_reads_as_empty_not_as_the_placeholder() -> None:
    workbook = book({"A1": 1.0, "A3": 3.0})
    block = Evaluator(workbook).range_values(Ref("Data", 1, 1, 4, 1))
    assert block[:, 0].tolist() == [1.0, None, 3.0, None]


@pytest.mark.parametrize("seed", range(10))
@pytest.mark.parametrize("store", ["dict", "compact"])
def test_one_cell_read_alone_holds_what_the_whole_block_read_gives_it(
    seed: int, store: str
) -> None:
    """A one-cell reference (=E3/E5) is read directly; the many-cell read is the reference:
    every cell of generated sheets, an array block's anchor and members included, cycles too."""
    rng = random.Random(1000 + seed)
    kinds = tuple(rng.sample(KINDS, rng.randrange(1, len(KINDS) + 1)))
    rows = rng.randrange(1, 30)
    cells = _sheet_cells(rng, rows, kinds)
    cells["D1"], cells["D2"] = "=D2+1", "=D1+1"  # a cycle: both read #CYCLE! or as met
    workbook = book(cells, arrays={"E2:F4": "=A2:B4*2"})
    if store == "compact":
        workbook = _compact(workbook)
    whole = Ref("Data", 1, 1, rows + 2, 7)
    expected = Evaluator(workbook).range_values(whole).tolist()
    alone = Evaluator(workbook)
    for row in range(1, rows + 3):
        for col in range(1, 8):
            block = alone.range_values(Ref("Data", row, col, row, col))
            assert block.shape == (1, 1)
            _same([[block[0, 0]]], [[expected[row - 1][col - 1]]])
