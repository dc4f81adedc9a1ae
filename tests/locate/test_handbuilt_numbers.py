"""The sums a hand-built slope is tested against, from each range's numbers found once: the
same Moments, to the last bit, as converting the numbers of each pair anew, on generated
ranges of floats, ints, numpy scalars, logicals, text and empty cells (and an error value,
which gives none)."""

from __future__ import annotations

import dataclasses
import random

import numpy as np
import pytest

from auditor.locate.handbuilt_sums import (
    Moments,
    is_number,
    moments_between,
    moments_swapped,
    numbers_of,
)
from auditor.read.workbook import ErrorValue


def _reference(y_values: list[object], x_values: list[object]) -> Moments | None:
    """Each pair's floats converted anew, one value at a time: the straightforward sums."""
    if any(isinstance(v, ErrorValue) for v in [*y_values, *x_values]):
        return None
    pairs = [
        (y, x) for y, x in zip(y_values, x_values, strict=True) if is_number(y) and is_number(x)
    ]
    if len(pairs) < 3:
        return None
    ys = np.array([float(y) for y, _ in pairs])  # type: ignore[arg-type]
    xs = np.array([float(x) for _, x in pairs])  # type: ignore[arg-type]
    if np.array_equal(ys, xs) or np.unique(xs).size < 3:
        return None
    dx, dy = xs - xs.mean(), ys - ys.mean()
    if float(dx @ dx) <= 0:
        return None
    x_all = np.array([float(v) for v in x_values if is_number(v)])  # type: ignore[arg-type]
    y_all = np.array([float(v) for v in y_values if is_number(v)])  # type: ignore[arg-type]
    dx_all, dy_all = x_all - x_all.mean(), y_all - y_all.mean()
    return Moments(
        n=int(xs.size),
        x_mean=float(xs.mean()),
        y_mean=float(ys.mean()),
        sxx=float(dx @ dx),
        sxy=float(dx @ dy),
        syy=float(dy @ dy),
        n_x=int(x_all.size),
        sxx_all=float(dx_all @ dx_all),
        n_y=int(y_all.size),
        syy_all=float(dy_all @ dy_all),
        x_mean_all=float(x_all.mean()),
        y_mean_all=float(y_all.mean()),
        sxy_raw=float(xs @ ys),
        sxx_raw=float(xs @ xs),
    )


def _value(rng: random.Random, plain: float) -> object:
    roll = rng.random()
    if roll < 0.6:
        return plain
    if roll < 0.7:
        return int(round(plain))
    if roll < 0.75:
        return np.float64(plain)
    return rng.choice([None, "n/a", True, False, "3.5", ""])


@pytest.mark.parametrize("seed", range(60))
def test_moments_from_numbers_found_once_are_the_same_bits(seed: int) -> None:
    rng = random.Random(seed)
    n = rng.randrange(1, 300)
    mixed = rng.random() < 0.7
    xs = [rng.uniform(-50, 50) for _ in range(n)]
    ys = [2.5 * x + rng.gauss(0, 3) for x in xs]
    x_values = [_value(rng, x) if mixed else x for x in xs]
    y_values = [_value(rng, y) if mixed else y for y in ys]
    if rng.random() < 0.1:
        y_values[rng.randrange(n)] = ErrorValue("#DIV/0!")
    y_numbers, x_numbers = numbers_of(y_values), numbers_of(x_values)
    expected = _reference(y_values, x_values)
    if y_numbers is None or x_numbers is None:
        assert expected is None
        return
    found = moments_between(y_numbers, x_numbers)
    assert (found is None) == (expected is None)
    if found is not None and expected is not None:
        assert dataclasses.astuple(found) == dataclasses.astuple(expected)
        assert found.slope == expected.slope  # exactly: the same sums in the same order


def test_numbers_mark_what_is_a_number_and_keep_nan_elsewhere() -> None:
    numbers = numbers_of([1.5, 2, True, "4", None, np.float64(0.5)])
    assert numbers is not None
    assert numbers.mask.tolist() == [True, True, False, False, False, True]
    assert numbers.floats[numbers.mask].tolist() == [1.5, 2.0, 0.5]
    assert np.isnan(numbers.floats[~numbers.mask]).all()
    assert numbers_of([1.0, ErrorValue("#N/A")]) is None


@pytest.mark.parametrize("seed", range(80))
def test_y_on_x_from_x_on_y_is_the_same_bits_as_found_anew(seed: int) -> None:
    """moments_swapped exchanges the roles of known sums: the same Moments, to the last bit,
    as moments_between of the swapped pair, on generated ranges (few levels on either side,
    constant columns, text among the numbers, lengths up to 2,000)."""
    rng = random.Random(7000 + seed)
    n = rng.choice([3, 4, 6, 25, 300, 2000])
    levels = rng.choice([None, 1, 2, 3, 5])

    def column(scale: float) -> list[float]:
        if levels is not None and rng.random() < 0.5:
            return [float(rng.randrange(levels)) for _ in range(n)]  # few levels
        return [rng.uniform(-scale, scale) for _ in range(n)]

    xs, ys = column(50), column(1e6)
    x_values = [_value(rng, x) if rng.random() < 0.3 else x for x in xs]
    y_values = [_value(rng, y) if rng.random() < 0.3 else y for y in ys]
    a, b = numbers_of(y_values), numbers_of(x_values)
    assert a is not None and b is not None
    forward = moments_between(a, b)
    expected = moments_between(b, a)
    if forward is None:
        return  # the search computes the other orientation anew then
    swapped = moments_swapped(forward, a, b)
    assert (swapped is None) == (expected is None)
    if swapped is not None and expected is not None:
        assert dataclasses.astuple(swapped) == dataclasses.astuple(expected)
