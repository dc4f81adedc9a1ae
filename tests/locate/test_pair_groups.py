"""Grouping calls into regressions compares only calls over the same sheets: the groups are
those comparing every pair of calls gives, in the same order, on generated calls over a few
sheets (names differing in case too), columns and row spans, lagged and swapped pairs among
them."""

from __future__ import annotations

import random

import pytest

from auditor.formula.syntax import Ref
from auditor.locate.grouping import PairGroups, same_regression
from auditor.locate.spec import PairUse
from auditor.read.workbook import Cell


def _every_pair(uses: list[PairUse]) -> list[list[PairUse]]:
    """Union-find over every pair of calls: the straightforward grouping."""
    parent = list(range(len(uses)))

    def find(i: int) -> int:
        while parent[i] != i:
            i = parent[i]
        return i

    for i in range(len(uses)):
        for j in range(i):
            if same_regression(uses[i], uses[j]):
                parent[find(i)] = find(j)
    groups: dict[int, list[PairUse]] = {}
    for i, use in enumerate(uses):
        groups.setdefault(find(i), []).append(use)
    return list(groups.values())


def _use(rng: random.Random, index: int) -> PairUse:
    sheets = ["Data", "DATA", "Other", "Third"]
    first, length = rng.randrange(1, 40), rng.randrange(3, 40)
    x_col, y_col = rng.randrange(1, 5), rng.randrange(1, 5)
    x_sheet, y_sheet = rng.choice(sheets), rng.choice(sheets)
    if rng.random() < 0.5:
        y_sheet = x_sheet
    shift = rng.choice([0, 0, 1, 2])  # a lag when the columns are the same
    x = Ref(x_sheet, first, x_col, first + length, x_col)
    y = Ref(y_sheet, first + shift, y_col, first + shift + length, y_col)
    if rng.random() < 0.2:
        x, y = y, x
    function = rng.choice(["SLOPE", "INTERCEPT", "RSQ", "LINEST"])
    cell = Cell("Results", index + 1, 9, 0.0)
    return PairUse(cell, function, y, x, intercept=rng.random() < 0.8)


@pytest.mark.parametrize("seed", range(40))
def test_groups_are_those_every_pair_gives(seed: int) -> None:
    rng = random.Random(seed)
    uses = [_use(rng, i) for i in range(rng.randrange(1, 40))]
    assert PairGroups(uses).groups() == _every_pair(uses)


def test_calls_on_two_sheets_group_with_their_swapped_twin_only() -> None:
    x, y = Ref("Data", 2, 1, 20, 1), Ref("data", 2, 2, 20, 2)
    swapped = PairUse(Cell("R", 2, 9, 0.0), "SLOPE", x, y)
    straight = PairUse(Cell("R", 1, 9, 0.0), "SLOPE", y, x)
    elsewhere = PairUse(Cell("R", 3, 9, 0.0), "SLOPE", Ref("Other", 2, 2, 20, 2), x)
    groups = PairGroups([straight, elsewhere, swapped]).groups()
    assert groups == [[straight, swapped], [elsewhere]]
