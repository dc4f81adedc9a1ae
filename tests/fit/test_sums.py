"""exact_sum is math.fsum over the array, bit for bit, on generated arrays of every shape the fit
passes it (contiguous, strided columns, empty, huge offsets, cancelling terms, inf and nan)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from auditor.fit.sums import exact_sum


def _same(a: float, b: float) -> bool:
    return (math.isnan(a) and math.isnan(b)) or (
        a == b and math.copysign(1, a) == math.copysign(1, b)
    )


@pytest.mark.parametrize("seed", range(40))
def test_exact_sum_is_fsum_on_generated_arrays(seed: int) -> None:
    rng = np.random.default_rng(seed)
    n = int(rng.integers(0, 3000))
    scale = 10.0 ** rng.integers(-140, 140)
    values = rng.normal(size=n) * scale + rng.choice([0.0, 1e9, -1e15]) * scale
    if n and seed % 3 == 0:
        values[rng.integers(0, n)] = -math.fsum(values)  # a sum that cancels to rounding
    matrix = np.column_stack([values, values[::-1]])
    for array in (values, matrix[:, 0], matrix[:, 1], values[::3], values * values):
        assert _same(exact_sum(array), math.fsum(array))


def test_exact_sum_of_special_arrays() -> None:
    assert exact_sum(np.zeros(0)) == 0.0
    assert _same(exact_sum(np.array([-0.0, -0.0])), math.fsum(np.array([-0.0, -0.0])))
    assert math.isnan(exact_sum(np.array([1.0, math.nan])))
    assert exact_sum(np.array([1.0, math.inf])) == math.inf
    with pytest.raises(ValueError):
        exact_sum(np.array([math.inf, -math.inf]))
    assert exact_sum(np.array([1e100, 1.0, -1e100])) == 1.0  # fsum keeps the 1 (exact)
    # Not float64 (or not one-dimensional): the general way, the same answer.
    assert exact_sum(np.arange(10)) == 45.0  # type: ignore[arg-type]
    assert exact_sum(np.array([1.5, 2.5], dtype=">f8")) == 4.0
