"""Power of the t test of a slope, and the Sxx (or n, or range) a design needs.

For a straight line, SE(b1) = σ/√Sxx and t = b1/SE follows a noncentral t distribution with
df = n − 2 (n − 1 through the origin) and noncentrality δ = β1·√Sxx/σ. The power of the two-sided
test at level α is P(|T| > t_crit) under that distribution. It is computed with
the noncentral t (``scipy.special`` through auditor.fit.distributions), not with a normal
approximation: at small df the normal overstates power by
several percentage points (tests/test_power.py shows it against a Monte Carlo simulation).

Everything here is plain arithmetic on numbers; the design metrics (auditor.design.metrics) and the
planner (auditor.cli.plan) build on it.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from auditor.design.brent import brentq
from auditor.fit.distributions import nct_tails, t_ppf
from auditor.fit.sums import exact_sum

FloatArray = NDArray[np.float64]


def _check(df: int, alpha: float) -> None:
    if df < 1:
        raise ValueError(f"df must be at least 1 for a t test, got {df!r}")
    if not 0.0 < alpha < 1.0:
        raise ValueError(f"alpha must lie strictly between 0 and 1, got {alpha!r}")


def power_at(noncentrality: float, df: int, alpha: float) -> float:
    """Power of the two-sided t test at level ``alpha`` when t has noncentrality ``δ``."""
    _check(df, alpha)
    return _power_beyond(noncentrality, df, alpha, float(t_ppf(1.0 - alpha / 2.0, df)))


def _power_beyond(noncentrality: float, df: int, alpha: float, critical: float) -> float:
    """Power with the critical value already known (computed once per root search)."""
    delta = abs(float(noncentrality))
    if delta == 0.0:
        return alpha
    upper, lower = nct_tails(critical, df, delta)
    return min(1.0, upper + lower)


def slope_power(slope: float, sigma: float, sxx: float, df: int, alpha: float) -> float:
    """Power to detect a true slope ``slope`` with residual SD ``sigma`` and spread ``sxx``."""
    if sigma <= 0.0 or sxx <= 0.0:
        raise ValueError(f"sigma and Sxx must be positive, got {sigma!r} and {sxx!r}")
    return power_at(slope * math.sqrt(sxx) / sigma, df, alpha)


@lru_cache(maxsize=4096)
def noncentrality_for(power: float, df: int, alpha: float) -> float:
    """The δ at which the two-sided test reaches ``power`` (0 when power ≤ alpha).

    Cached: the design metrics, the advice and the planner ask for the same few (power, df,
    alpha) again and again, and each answer is a root search of some twenty noncentral t tails.
    """
    _check(df, alpha)
    if not 0.0 < power < 1.0:
        raise ValueError(f"power must lie strictly between 0 and 1, got {power!r}")
    if power <= alpha:
        return 0.0
    critical = float(t_ppf(1.0 - alpha / 2.0, df))
    high = 1.0
    while _power_beyond(high, df, alpha, critical) < power:
        high *= 2.0
        if high > 1e8:  # unreachable at any sane df and power; say so rather than loop
            raise ValueError(f"power {power!r} cannot be reached with df = {df}")
    return float(
        brentq(lambda d: _power_beyond(d, df, alpha, critical) - power, 0.0, high, xtol=1e-12)
    )


def min_detectable_slope(sigma: float, sxx: float, df: int, alpha: float, power: float) -> float:
    """The smallest true slope detected with ``power`` at ``alpha``: δ*·σ/√Sxx."""
    return noncentrality_for(power, df, alpha) * sigma / math.sqrt(sxx)


def sxx_to_detect(slope: float, sigma: float, df: int, alpha: float, power: float) -> float:
    """The Sxx at which a true slope ``slope`` is detected with ``power`` (for this df)."""
    if slope == 0.0:
        return math.inf
    return (noncentrality_for(power, df, alpha) * sigma / abs(slope)) ** 2


def sxx_for_se(sigma: float, target_se: float) -> float:
    """SE(b1) = σ/√Sxx, so Sxx = (σ/SE)²: quadrupling Sxx halves the SE."""
    return (sigma / target_se) ** 2


def sxx_for_half_width(sigma: float, half_width: float, df: int, confidence: float) -> float:
    """The Sxx at which the two-sided CI of the slope has the given half-width."""
    critical = float(t_ppf(0.5 + confidence / 2.0, df))
    return (critical * sigma / half_width) ** 2


# --- designs --------------------------------------------------------------------------------


def sxx_of(x: ArrayLike, intercept: bool = True) -> float:
    """Σ(x − x̄)² with an intercept (centred, two-pass), Σx² through the origin."""
    values = np.asarray(x, dtype=np.float64)
    if not intercept:
        return exact_sum(values * values)
    mean = exact_sum(values) / values.size
    deviations = values - mean
    return exact_sum(deviations * deviations)


def even_levels(n: int, low: float, high: float) -> FloatArray:
    """``n`` points evenly spaced from ``low`` to ``high`` (both ends included)."""
    if n < 2:
        raise ValueError(f"an evenly spaced design needs at least 2 points, got {n!r}")
    return np.linspace(low, high, n)


def sxx_even(n: int, low: float, high: float) -> float:
    """Sxx of ``n`` evenly spaced points over [low, high]: n(n + 1)(high − low)² / (12(n − 1))."""
    return n * (n + 1) * (high - low) ** 2 / (12.0 * (n - 1))


def sxx_two_end(n: int, low: float, high: float) -> float:
    """Sxx of ``n`` points split between the two ends: a·b/n·(high − low)² (a + b = n)."""
    at_low = n // 2
    return at_low * (n - at_low) / n * (high - low) ** 2


def width_for_sxx_even(sxx: float, n: int) -> float:
    """The range ``n`` evenly spaced points must span to reach ``sxx``."""
    return math.sqrt(12.0 * (n - 1) * sxx / (n * (n + 1)))


def smallest_n(
    sxx_of_n: Callable[[int], float],
    needed_for_df: Callable[[int], float],
    n_min: int = 3,
    n_max: int = 10_000,
    parameters: int = 2,
) -> int | None:
    """The smallest n (from ``n_min``) whose design reaches the Sxx its own df needs.

    The design's Sxx grows with n and the Sxx needed shrinks as df grows, so "enough" is monotone
    in n: a doubling search then bisection needs ~2·log2(n) power solves, not n of them.
    """

    def enough(n: int) -> bool:
        return sxx_of_n(n) >= needed_for_df(n - parameters)

    low = max(n_min, parameters + 1)
    if low > n_max:
        return None
    if enough(low):
        return low
    high = low
    while not enough(high):
        if high >= n_max:
            return None
        low, high = high, min(n_max, high * 2)
    while high - low > 1:  # invariant: not enough(low), enough(high)
        middle = (low + high) // 2
        if enough(middle):
            high = middle
        else:
            low = middle
    return high
