"""Python floats for an array's values, equal values as one object.

A fitted value and a leverage depend on x alone, and a large table's x repeats (a few levels, or
measurements of a few decimals: 40,000 distinct values over a million rows). Each data point
holds its own Python float otherwise (24 bytes each, four per point); here equal values share
one, which no reader can tell apart (a float is immutable and compares by value).

Left as ``tolist()`` gives them: small arrays (nothing to save), arrays with a value that is not
finite (a NaN equals nothing, not even itself), arrays holding both 0.0 and -0.0 (equal, yet
written differently), and arrays whose values turn out nearly all distinct (the table of shared
values would cost more than it saves).
"""

from __future__ import annotations

import numpy as np

# Fewer values than this: plain tolist() (a small table has little to share).
SHARED_FROM = 4096
# Values converted at a time (the lists made for them are of this length).
PIECE = 1 << 16
# Sharing stops once the distinct values exceed this share of the values seen.
MOSTLY_DISTINCT = 0.75


def shared_floats(values: np.ndarray) -> list[float]:
    """``values.tolist()`` (a 1-d float64 array), equal values as one Python float."""
    if values.ndim != 1 or values.dtype != np.float64 or values.size < SHARED_FROM:
        return list(values.tolist())
    if not np.isfinite(values).all() or _both_zeros(values):
        return list(values.tolist())
    seen: dict[float, float] = {}
    out: list[float] = []
    for start in range(0, values.size, PIECE):
        part: list[float] = values[start : start + PIECE].tolist()
        if not seen and start:  # sharing given up: the rest as they are
            out.extend(part)
            continue
        out.extend(map(seen.setdefault, part, part))
        if len(seen) > MOSTLY_DISTINCT * (start + len(part)):
            seen = {}
    return out


def _both_zeros(values: np.ndarray) -> bool:
    zeros = values[values == 0.0]
    signs = np.signbit(zeros)
    return bool(signs.any()) and not bool(signs.all())
