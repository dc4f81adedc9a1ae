"""cells_in: the cells inside a box, by probing (a small box) or by one walk (a large one)."""

from __future__ import annotations

import random

from auditor.design.window import cells_in
from auditor.read.workbook import Cell


def _grid(seed: int) -> dict[tuple[int, int], Cell]:
    rng = random.Random(seed)
    places = {(rng.randint(1, 40), rng.randint(1, 12)) for _ in range(150)}
    return {(r, c): Cell("Oven", r, c, float(r * c)) for r, c in places}


def test_a_box_gives_exactly_the_cells_inside_it_either_way() -> None:
    for seed in range(30):
        cells = _grid(seed)
        rng = random.Random(1000 + seed)
        r1, c1 = rng.randint(-8, 30), rng.randint(-8, 10)
        r2, c2 = r1 + rng.randint(0, 30), c1 + rng.randint(0, 10)
        inside = {(r, c) for r, c in cells if max(r1, 1) <= r <= r2 and max(c1, 1) <= c <= c2}
        got = dict(cells_in(cells, r1, c1, r2, c2))
        assert set(got) == inside
        assert all(got[key] is cells[key] for key in got)


def test_a_small_box_is_probed_and_a_large_one_walked() -> None:
    cells = {(r, 2): Cell("Oven", r, 2, float(r)) for r in range(1, 101)}  # 100 cells
    probed = list(cells_in(cells, 10, 1, 12, 3))  # 9 places < 100 cells: probed row by row
    assert [key for key, _ in probed] == [(10, 2), (11, 2), (12, 2)]
    walked = list(cells_in(cells, 1, 1, 100, 3))  # 300 places ≥ 100 cells: the sheet's order
    assert [key for key, _ in walked] == [(r, 2) for r in range(1, 101)]
