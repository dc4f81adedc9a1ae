"""The pasted-table search's numbers view equals the dict of constant numbers it replaces.

Evidence: on generated sheets (numbers, ints, logicals, text, infinities, formulas with stored
numbers, gaps, a pasted coefficients row and analysis of variance written in), held in a plain
dict and in the compact store, :func:`number_grid` answers every look-up as the plain
comprehension over ``sheet.cells`` does, and the banded anchor search gives the same places, in
the same order, as the one dense copy of the whole sheet.
"""

from __future__ import annotations

import math
import random
from types import SimpleNamespace

import pytest

from auditor.locate import pasted_anchors, pasted_data
from auditor.locate.pasted_anchors import anchors
from auditor.locate.pasted_data import DataIndex, Run, _runs
from auditor.locate.pasted_numbers import NumberGrid, number_grid
from auditor.read.compact import CompactCells
from auditor.read.workbook import Cell, Sheet, Workbook


def _plain_numbers(sheet: Sheet) -> dict[tuple[int, int], float]:
    """The definition: every constant cell holding a finite number, as a float."""
    return {
        key: float(cell.value)
        for key, cell in sheet.cells.items()
        if cell.formula is None
        and isinstance(cell.value, (int, float))
        and not isinstance(cell.value, bool)
        and math.isfinite(float(cell.value))
    }


def _generated(seed: int, rows: int) -> list[Cell]:
    rng = random.Random(seed)
    cells = []
    for r in range(1, rows + 1):
        for c in range(1, 9):
            kind = rng.random()
            if kind < 0.15:
                continue
            value: object = rng.uniform(-1e3, 1e3)
            formula = None
            if kind < 0.25:
                value = rng.randint(-5, 5)
            elif kind < 0.3:
                value = rng.choice([True, False, "text", math.inf, -math.nan, None, -0.0])
            elif kind < 0.35:
                value, formula = 2.0, "=1+1"
            cells.append(Cell("S", r, c, value, formula, "General"))  # type: ignore[arg-type]
    # A pasted coefficients row (b, SE, t, p, bounds) and an analysis of variance's df column.
    pasted = (2.0, 0.5, 4.0, 0.01, 0.8, 3.2)
    cells += [Cell("S", rows + 3, 2 + i, v, None, "General") for i, v in enumerate(pasted)]
    cells += [
        Cell("S", rows + 5 + i, 3, float(v), None, "General") for i, v in enumerate((1, 8, 9))
    ]
    return cells


def _sheets(cells: list[Cell]) -> tuple[Sheet, Sheet]:
    plain = Sheet("S", {(c.row, c.col): c for c in cells})
    store = CompactCells("S")
    for cell in cells:
        if cell.formula is None:
            store.add_constant(cell.row, cell.col, cell.value, cell.number_format)
        else:
            store[(cell.row, cell.col)] = cell
    return plain, Sheet("S", store)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_number_grid_answers_as_the_dict_of_constant_numbers(seed: int) -> None:
    for sheet in _sheets(_generated(seed, 60)):
        expected = _plain_numbers(sheet)
        grid = number_grid(sheet)
        assert isinstance(grid, NumberGrid)
        assert len(grid) == len(expected)
        assert sorted(grid) == sorted(expected)
        for r in range(0, 72):
            for c in range(0, 12):
                want = expected.get((r, c))
                assert grid.get((r, c)) == want and ((r, c) in grid) == (want is not None)
                if want is not None:
                    assert grid[(r, c)] == want and type(grid[(r, c)]) is float
                    assert math.copysign(1.0, grid[(r, c)]) == math.copysign(1.0, want)
        for absent in ((10**7, 3), (2, 0), (2, 16385), (-1, 2), "A1", (1.5,)):
            assert absent not in grid and grid.get(absent) is None  # type: ignore[arg-type]
        with pytest.raises(KeyError):
            grid[(10**7, 3)]


@pytest.mark.parametrize("seed", [4, 5])
def test_banded_anchor_search_finds_what_one_dense_copy_finds(
    seed: int, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(pasted_anchors, "BAND_ROWS", 7)  # many bands, edges everywhere
    for sheet in _sheets(_generated(seed, 90)):
        expected = anchors(_plain_numbers(sheet))
        found = anchors(number_grid(sheet))
        assert found == expected
        assert (93, 2) in found[0] and (95, 3) in found[1]  # the rows written in


def test_a_sheet_of_huge_extent_keeps_the_dict_in_sheet_order() -> None:
    cells = [Cell("S", r, c, float(r * c), None, "General") for r, c in ((5, 3), (900_000, 30))]
    cells.append(Cell("S", 2, 1, 7, None, "General"))  # out of order: a dict keeps it last
    plain, _ = _sheets(cells)
    grid = number_grid(plain)
    assert type(grid) is dict
    assert list(grid.items()) == [((5, 3), 15.0), ((900_000, 30), 27_000_000.0), ((2, 1), 7.0)]
    assert number_grid(Sheet("S", {})) == {}


def _old_index_runs(sheet: Sheet, skip: set[tuple[int, int]]) -> list[Run]:
    """The index as built from a dict of every number (formulas' stored values included)."""
    numbers = {
        key: float(cell.value)  # type: ignore[arg-type]
        for key, cell in sheet.cells.items()
        if isinstance(cell.value, (int, float))
        and not isinstance(cell.value, bool)
        and key not in skip
        and math.isfinite(float(cell.value))
    }
    return _runs("S", numbers, by_rows=False) + _runs("S", numbers, by_rows=True)


def test_cells_out_of_row_order_give_the_same_grid() -> None:
    cells = _generated(8, 40)
    plain, _ = _sheets(cells)
    shuffled = Sheet("S", dict(reversed(list(plain.cells.items()))))
    grid, expected = number_grid(shuffled), _plain_numbers(plain)
    assert isinstance(grid, NumberGrid) and list(grid) == sorted(expected)
    assert all(grid[key] == value for key, value in expected.items())
    assert anchors(grid) == anchors(expected)


@pytest.mark.parametrize("dense", [True, False])
def test_the_data_index_holds_the_runs_the_dict_of_numbers_gives(
    dense: bool, monkeypatch: pytest.MonkeyPatch
) -> None:
    if not dense:
        monkeypatch.setattr(pasted_data, "MAX_DENSE_CELLS", 0)  # the cell-by-cell path
    skip = {(r, c) for r in range(10, 20) for c in (2, 3)}
    table = SimpleNamespace(sheet="S", footprint=skip, n=4)
    for sheet in _sheets(_generated(6, 80)):
        workbook = Workbook("w.xlsx", "", {"S": sheet}, [], True)
        index = DataIndex.build(workbook, [table])  # type: ignore[list-item]
        expected = [run for run in _old_index_runs(sheet, skip) if len(run.values) >= 4]
        key = lambda run: (run.by_rows, run.line, run.start)  # noqa: E731
        assert sorted(map(key, index.runs)) == sorted(map(key, expected))
        assert len(index.runs) > 20
        values = {key(run): run.values.tolist() for run in expected}
        assert all(run.values.tolist() == values[key(run)] for run in index.runs)
        formula_numbers = [c for c in sheet.cells.values() if c.formula and c.value == 2.0]
        assert formula_numbers  # the formulas' stored numbers are data too
