"""Weights of a calibration line: which scheme a weight column holds, and what weighting changes.

A weight column is recognised by what it holds, not by its header: its values are proportional
(to 1e-6 relative) to 1/x, 1/x², 1/y, 1/y² or 1/s² (s the SD of the replicates at each level).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from auditor.fit.calibration import (
    FloatArray,
    LineFit,
    back_calculate,
    deviation_percent,
    fit_line,
)

SCHEMES = ("1/x", "1/x²", "1/y", "1/y²", "1/s²")
PROPORTIONAL_TOLERANCE = 1e-6


def scheme_weights(scheme: str, x: ArrayLike, y: ArrayLike) -> FloatArray | None:
    """The weights of a named scheme, or None where it is undefined (a zero x, one replicate)."""
    xs, ys = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        if scheme == "1/x":
            w = 1.0 / xs
        elif scheme == "1/x²":
            w = 1.0 / xs**2
        elif scheme == "1/y":
            w = 1.0 / ys
        elif scheme == "1/y²":
            w = 1.0 / ys**2
        elif scheme == "1/s²":
            w = np.empty_like(xs)
            for level in np.unique(xs):
                at = xs == level
                w[at] = 1.0 / np.var(ys[at], ddof=1) if at.sum() >= 2 else math.nan
        else:
            raise ValueError(f"unknown weighting scheme {scheme!r}; choose one of {SCHEMES}")
    return w if np.all(np.isfinite(w)) and np.all(w > 0) else None


def recognise_scheme(weights: ArrayLike, x: ArrayLike, y: ArrayLike) -> str | None:
    """The scheme a column of weights follows (up to a constant factor), or None."""
    given = np.asarray(weights, dtype=float)
    if given.size < 3 or not np.all(np.isfinite(given)) or np.any(given <= 0):
        return None
    for scheme in SCHEMES:
        expected = scheme_weights(scheme, x, y)
        if expected is None:
            continue
        ratio = given / expected
        if np.ptp(ratio) <= PROPORTIONAL_TOLERANCE * float(np.mean(ratio)):
            return scheme
    return None


@dataclass(frozen=True)
class WeightingEffect:
    scheme: str
    line: LineFit
    lowest_level: float
    deviation_unweighted: float  # mean % deviation of the lowest non-zero standard, unweighted
    deviation_weighted: float
    sum_abs_unweighted: float  # Σ|% deviation| over the non-zero standards
    sum_abs_weighted: float


def weighting_effect(x: ArrayLike, y: ArrayLike, scheme: str) -> WeightingEffect | None:
    """Refit with a scheme over the non-zero standards and compare the back-calculated deviations
    (the sum of absolute relative errors is the usual yardstick for choosing weights; common
    practice)."""
    xs, ys = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    keep = xs != 0
    xs, ys = xs[keep], ys[keep]
    weights = scheme_weights(scheme, xs, ys)
    if weights is None or np.unique(xs).size < 3:
        return None
    plain, weighted = fit_line(xs, ys), fit_line(xs, ys, weights)
    dev_plain = deviation_percent(xs, back_calculate(ys, plain))
    dev_weighted = deviation_percent(xs, back_calculate(ys, weighted))
    lowest = float(xs.min())
    at = xs == lowest
    return WeightingEffect(
        scheme,
        weighted,
        lowest,
        float(dev_plain[at].mean()),
        float(dev_weighted[at].mean()),
        float(np.abs(dev_plain).sum()),
        float(np.abs(dev_weighted).sum()),
    )
