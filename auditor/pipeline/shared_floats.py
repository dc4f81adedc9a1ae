"""Python floats for an array's values, equal values as one object.

A fitted value and a leverage depend on x alone, and a large table's x repeats (a few levels, or
measurements of a few decimals: 40,000 distinct values over a million rows). Each data point
holds its own Python float otherwise (24 bytes each, four per point); here equal values share
one, which no reader can tell apart (a float is immutable and compares by value).

Left as ``tolist()`` gives them: arrays below :data:`SHARED_FROM` values, arrays with a value
that is not finite (a NaN equals nothing, not even itself) and arrays holding both 0.0 and -0.0
(equal, yet written differently).
"""

from __future__ import annotations

import numpy as np

# Fewer values than this: plain tolist(). Sharing costs a sort (a few hundredths of a second on
# 200,000 values, ~1 % of such an audit) and pays where memory is the concern: tables of
# hundreds of thousands of rows and more (a million rows: 60 MB less).
SHARED_FROM = 1 << 18


def shared_floats(values: np.ndarray) -> list[float]:
    """``values.tolist()`` (a 1-d float64 array), equal values as one Python float."""
    plain = values.ndim != 1 or values.dtype != np.float64 or values.size < SHARED_FROM
    if plain or not np.isfinite(values).all() or _both_zeros(values):
        as_they_are: list[float] = values.tolist()
        return as_they_are
    # One Python float per distinct value, then each value's own taken from them by numpy (a
    # sort and a take: a dict of the values met costs three times as much).
    distinct, which = np.unique(values, return_inverse=True)
    floats = np.array(distinct.tolist(), dtype=object)
    shared: list[float] = floats[which.reshape(-1)].tolist()
    return shared


def _both_zeros(values: np.ndarray) -> bool:
    zeros = values[values == 0.0]
    signs = np.signbit(zeros)
    return bool(signs.any()) and not bool(signs.all())
