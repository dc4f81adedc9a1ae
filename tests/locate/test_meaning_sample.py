"""The sampled "is it a column of data?" test of auditor.locate.meaning, which looks its cells up in
one pass and counts them by type, against the plain walk it replaced (one cell at a time, stopping
once the answer is known), on generated sheets of numbers, text, booleans, blanks and errors."""

from __future__ import annotations

import random

import pytest

from auditor.formula.syntax import Ref
from auditor.locate.meaning import SAMPLE, _mostly_numbers
from auditor.read.workbook import Cell, ErrorValue, Sheet


def _walked(sheet: Sheet, ref: Ref) -> bool:
    """The plain walk: cell by cell over the sampled positions, stopping when decided."""
    count = ref.rows * ref.cols
    picks = (
        range(count) if count <= SAMPLE else [i * (count - 1) // SAMPLE for i in range(SAMPLE + 1)]
    )
    total = len(picks)
    numbers, left = 0, total
    for k in picks:
        if 2 * numbers >= total or 2 * (numbers + left) < total:
            break
        value = sheet.value(ref.r1 + k // ref.cols, ref.c1 + k % ref.cols)
        numbers += isinstance(value, (int, float)) and not isinstance(value, bool)
        left -= 1
    return 2 * numbers >= total


class _Count(int):
    """A subclass of int (as a reader might hand over): a number all the same."""


KINDS = [
    lambda r: r.uniform(-5, 5),
    lambda r: r.randint(-9, 9),
    lambda r: "n/a",
    lambda r: True,
    lambda r: None,
    lambda r: ErrorValue("#DIV/0!"),
    lambda r: _Count(3),
]


def _sheet(rng: random.Random, rows: int, cols: int, share: float) -> Sheet:
    sheet = Sheet("Readings")
    for r in range(1, rows + 1):
        for c in range(1, cols + 1):
            if rng.random() < share:
                value = rng.choice(KINDS[:2])(rng)
            else:
                value = rng.choice(KINDS)(rng)
                if value is None:
                    continue  # an absent cell
            sheet.cells[(r, c)] = Cell("Readings", r, c, value)
    sheet.max_row, sheet.max_col = rows, cols
    return sheet


@pytest.mark.parametrize("seed", range(40))
def test_counted_sample_equals_the_plain_walk(seed: int) -> None:
    rng = random.Random(seed)
    rows = rng.choice([3, 7, 40, 199, 200, 201, 202, 450, 1200])
    cols = rng.choice([1, 3])
    sheet = _sheet(rng, rows, cols, rng.choice([0.0, 0.3, 0.5, 0.7, 1.0]))
    for _ in range(12):
        c = rng.randint(1, cols)
        r1 = rng.randint(1, rows)
        r2 = rng.randint(r1, rows + 5)
        column = Ref("Readings", r1, c, r2, c)
        row = Ref("Readings", r1, 1, r1, cols + rng.randint(0, 250))
        for ref in (column, row):
            assert _mostly_numbers(sheet, ref) == _walked(sheet, ref), ref


def test_both_answers_occur_on_exact_halves() -> None:
    """Ten cells, five numbers: half counts as mostly (two of two, one of two likewise)."""
    sheet = Sheet("Readings")
    for r in range(1, 11):
        sheet.cells[(r, 1)] = Cell("Readings", r, 1, float(r) if r % 2 else "text")
    assert _mostly_numbers(sheet, Ref("Readings", 1, 1, 10, 1))
    assert _walked(sheet, Ref("Readings", 1, 1, 10, 1))
    assert not _mostly_numbers(sheet, Ref("Readings", 2, 1, 4, 1))  # text, 3.0, text
    assert not _walked(sheet, Ref("Readings", 2, 1, 4, 1))
