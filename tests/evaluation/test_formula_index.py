"""What a range holds, found through the index, is what walking every formula column and every
array block of the sheet finds, in the same order: on generated layouts (columns met out of
order, single-cell and wider array blocks, sheets with none), for cell, column, row and
whole-sheet ranges."""

from __future__ import annotations

import random

import pytest

from auditor.evaluation.formula_index import Bounds, FormulaIndex
from auditor.formula.syntax import Ref


def _cells_walked(by_col: dict[int, list[int]], r1: int, c1: int, r2: int, c2: int) -> list:
    return [(r, c) for c, rows in by_col.items() if c1 <= c <= c2 for r in rows if r1 <= r <= r2]


def _blocks_walked(blocks: dict[tuple[int, int], Bounds], r1: int, c1: int, r2: int, c2: int):
    return [b for b in blocks.values() if b[0] <= r2 and r1 <= b[2] and b[1] <= c2 and c1 <= b[3]]


def _layout(rng: random.Random) -> tuple[dict, dict]:
    rows: dict[str, dict[int, list[int]]] = {}
    blocks: dict[str, dict[tuple[int, int], Bounds]] = {}
    for sheet in ("Data", "Fit", "Empty"):
        columns = rng.sample(range(1, 60), rng.randrange(0, 25)) if sheet != "Empty" else []
        rows[sheet] = {col: sorted(rng.sample(range(1, 99), 3)) for col in columns}
        found: dict[tuple[int, int], Bounds] = {}
        for _ in range(rng.randrange(0, 40) if sheet != "Empty" else 0):
            r1, c1 = rng.randrange(1, 90), rng.randrange(1, 60)
            tall, wide = rng.choice([(0, 0), (0, 0), (3, 0), (0, 2), (8, 8)])
            found.setdefault((r1, c1), (r1, c1, r1 + tall, c1 + wide))
        blocks[sheet] = found
    return rows, blocks


@pytest.mark.parametrize("seed", range(40))
def test_the_index_finds_what_the_walk_finds_in_its_order(seed: int) -> None:
    rng = random.Random(seed)
    rows, blocks = _layout(rng)
    index = FormulaIndex(rows, blocks)
    for _ in range(60):
        sheet = rng.choice(["Data", "Fit", "Empty", "Absent"])
        r1, c1 = rng.randrange(1, 100), rng.randrange(1, 65)
        r2 = r1 + rng.choice([0, 0, 3, 40, 1_048_575 - r1])
        c2 = c1 + rng.choice([0, 0, 1, 5, 16_384 - c1])
        box = (r1, c1, r2, c2)
        by_col, by_anchor = rows.get(sheet, {}), blocks.get(sheet, {})
        assert index.formula_cells(sheet, *box) == _cells_walked(by_col, *box)
        assert index.blocks_over(sheet, *box) == _blocks_walked(by_anchor, *box)
        reached = [(sheet, r, c) for r, c in _cells_walked(by_col, *box)]
        reached += [(sheet, b[0], b[1]) for b in _blocks_walked(by_anchor, *box)]
        ref = Ref(sheet, r1, c1, r2, c2)
        assert index.reached(sheet, ref) == reached
        assert index.reached(sheet, ref) == reached  # the second time from the cache


def test_columns_and_blocks_come_back_in_the_order_they_were_met() -> None:
    index = FormulaIndex(
        {"Data": {7: [2], 3: [2, 5], 5: [9]}},
        {"Data": {(9, 9): (9, 9, 9, 9), (1, 2): (1, 2, 4, 3), (3, 3): (3, 3, 3, 3)}},
    )
    assert index.columns("Data", 2, 7) == [7, 3, 5]  # met 7 first, then 3, then 5
    assert index.formula_cells("Data", 1, 1, 9, 9) == [(2, 7), (2, 3), (5, 3), (9, 5)]
    assert index.blocks_over("Data", 3, 3, 9, 9) == [(9, 9, 9, 9), (1, 2, 4, 3), (3, 3, 3, 3)]
    assert index.blocks_over("Data", 5, 1, 8, 8) == []
