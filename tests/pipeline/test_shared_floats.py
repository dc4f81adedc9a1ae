"""shared_floats gives what ``tolist()`` gives, value for value and sign for sign, with equal
values as one object when they repeat; checked against plain ``tolist()`` on generated arrays
of every kind (few levels, all distinct, signed zeros, NaN and infinities, small)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from auditor.pipeline import shared_floats as module
from auditor.pipeline.shared_floats import shared_floats


def _same(got: list[float], want: list[float]) -> None:
    assert len(got) == len(want)
    for a, b in zip(got, want, strict=True):
        assert type(a) is float
        assert (math.isnan(a) and math.isnan(b)) or (
            a == b and math.copysign(1, a) == math.copysign(1, b)
        )


def _array(seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    n = int(rng.integers(0, 20_000))
    kind = seed % 6
    if kind == 0:  # a few levels
        return rng.choice([0.5, 1.0, 2.0, 4.0], n)
    if kind == 1:  # all distinct
        return rng.normal(size=n)
    if kind == 2:  # both zeros among repeated values
        values = rng.choice([0.0, -0.0, 3.25], n)
        return values
    if kind == 3:  # a value that is not finite
        values = np.round(rng.uniform(0, 10, n), 1)
        if n:
            values[rng.integers(0, n)] = rng.choice([np.nan, np.inf, -np.inf])
        return values
    if kind == 4:  # repeated at first, distinct later
        values = rng.normal(size=n)
        values[: n // 3] = 1.5
        return values
    return np.round(rng.uniform(-50, 50, n), 3)  # measurements of three decimals


@pytest.mark.parametrize("seed", range(36))
def test_the_values_are_tolist_s(seed: int, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(module, "SHARED_FROM", 16)
    values = _array(seed)
    _same(shared_floats(values), values.tolist())


def test_repeated_values_share_one_object(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(module, "SHARED_FROM", 16)
    values = np.tile(np.array([0.1, 0.2, 0.3]), 10_000)
    got = shared_floats(values)
    assert got == values.tolist()
    assert len({id(v) for v in got}) == 3


def test_signed_zeros_are_kept_apart(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(module, "SHARED_FROM", 16)
    values = np.array([0.0, -0.0] * 5_000)
    got = shared_floats(values)
    assert [math.copysign(1, v) for v in got[:4]] == [1.0, -1.0, 1.0, -1.0]


def test_distinct_values_stay_in_order(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(module, "SHARED_FROM", 16)
    values = np.arange(200_000, dtype=float)[::-1] / 7.0
    got = shared_floats(values)
    assert got == values.tolist()


def test_below_the_threshold_the_floats_are_tolist_s_own() -> None:
    """A table below SHARED_FROM values keeps tolist()'s floats: one object per value."""
    values = np.tile(np.array([0.1, 0.2]), 1_000)
    got = shared_floats(values)
    assert got == values.tolist()
    assert len({id(v) for v in got}) == values.size
