"""Correctly rounded sums of float arrays, read without a numpy scalar per element.

``math.fsum(array)`` iterates a numpy array element by element, making a numpy float64 object for
each; over a memoryview it reads the same doubles as plain Python floats, about twice as fast and
without a list of the whole array. ``math.fsum`` is correctly rounded whatever the order, so the
sum is the same number bit for bit (tests/fit/test_sums.py compares them).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray


def exact_sum(values: NDArray[np.float64]) -> float:
    """``math.fsum(values)`` of a one-dimensional float64 array, bit for bit."""
    if values.dtype != np.float64 or values.ndim != 1 or not values.dtype.isnative:
        return math.fsum(values)  # the general way, for anything else
    return math.fsum(memoryview(values))  # type: ignore[arg-type]  # numpy exports a buffer
