"""The formulas reading a cell, found by a binary search over each column's spans
(auditor.locate.formula_readers), are those listing every cell of every reference's window gives
(the plain index it replaced): generated references of every shape (cells, columns, rows, blocks,
whole columns, wide blocks) on sheets named in different cases."""

from __future__ import annotations

import random

import pytest

from auditor.formula.syntax import Ref
from auditor.locate.formula_readers import CellReaders, Key


def _listed(
    refs_by_key: dict[Key, list[Ref]],
) -> tuple[dict[tuple[str, int, int], set[Key]], set[Key]]:
    """Every cell of every window listed with its readers: the plain index."""
    readers: dict[tuple[str, int, int], set[Key]] = {}
    wide: set[Key] = set()
    for key, refs in refs_by_key.items():
        for ref in refs:
            rows = min(ref.r2, ref.r1 + 10) - ref.r1 + 1
            if rows * (ref.c2 - ref.c1 + 1) > 4096:
                wide.add(key)
                continue
            for r in range(ref.r1, ref.r1 + rows):
                for c in range(ref.c1, ref.c2 + 1):
                    readers.setdefault((ref.sheet.lower(), r, c), set()).add(key)
    return readers, wide


def _ref(rng: random.Random) -> Ref:
    sheet = rng.choice(["Data", "DATA", "Fit"])
    r1, c1 = rng.randrange(1, 40), rng.randrange(1, 8)
    shape = rng.random()
    if shape < 0.4:
        return Ref(sheet, r1, c1, r1, c1)  # one cell
    if shape < 0.7:
        return Ref(sheet, r1, c1, r1 + rng.randrange(1, 60), c1)  # a column
    if shape < 0.8:
        return Ref(sheet, r1, c1, r1, c1 + rng.randrange(1, 6))  # a row
    if shape < 0.95:
        return Ref(sheet, r1, c1, r1 + rng.randrange(0, 15), c1 + rng.randrange(0, 4))
    return Ref(sheet, 1, 1, 1_048_576, 600)  # too wide to list


@pytest.mark.parametrize("seed", range(40))
def test_the_readers_of_each_cell_are_those_the_listed_index_gives(seed: int) -> None:
    rng = random.Random(seed)
    refs_by_key: dict[Key, list[Ref]] = {}
    for i in range(rng.randrange(0, 80)):
        key = (rng.choice(["Data", "Fit"]), i + 1, rng.randrange(1, 9))
        refs_by_key[key] = [_ref(rng) for _ in range(rng.randrange(0, 4))]
    listed, wide = _listed(refs_by_key)
    readers = CellReaders(refs_by_key)
    assert readers.wide == wide
    for sheet in ("data", "fit", "other"):
        for row in range(1, 110):
            for col in range(1, 16):
                assert readers.of((sheet, row, col)) == listed.get((sheet, row, col), set())
