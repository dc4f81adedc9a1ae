"""The arithmetic a calibration reviewer redoes: plain functions over arrays, no workbook.

* :func:`fit_line` — the straight line by (weighted) least squares, with its standard errors;
* :func:`back_calculate` — each standard read back through the curve, and its deviation;
* :func:`judge_standards` — the acceptance of the back-calculated standards;
* :func:`detection_limits` — LOD = 3.3σ/S and LOQ = 10σ/S for each σ a laboratory may use;
* :func:`read_off` — a sample's concentration from its response, and its standard uncertainty
  from the calibration;
* :func:`coefficient_test` — t test of a coefficient against a target (intercept 0, slope 1).

The tests of the residuals (scatter growth, runs, curvature) are in
:mod:`auditor.fit.calibration_shape`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from auditor.fit.distributions import t_sf

FloatArray = NDArray[np.float64]


@dataclass(frozen=True)
class LineFit:
    """A straight line y = intercept + slope·x and what its uncertainty needs."""

    slope: float
    intercept: float
    residual_sd: float  # weighted (√(Σw·r²/df)) for a weighted fit
    se_slope: float
    se_intercept: float
    n: int
    df: int
    sxx: float  # Σw(x − x̄w)²; plain Sxx without weights
    x_mean: float  # weighted mean with weights
    y_mean: float
    weighted: bool = False
    weight_sum: float = math.nan  # Σw (n without weights)


def float_array(values: ArrayLike) -> FloatArray:
    """Any array-like as a flat array of floats."""
    return np.asarray(values, dtype=float).reshape(-1)


def fit_line(x: ArrayLike, y: ArrayLike, weights: ArrayLike | None = None) -> LineFit:
    """Least squares with an intercept; weighted when ``weights`` is given (any scale)."""
    xs, ys = float_array(x), float_array(y)
    w = np.ones_like(xs) if weights is None else float_array(weights)
    if xs.size < 3 or xs.size != ys.size or w.size != xs.size:
        raise ValueError(f"need at least 3 paired points, got {xs.size} x and {ys.size} y")
    if not np.all(np.isfinite(w)) or np.any(w <= 0):
        raise ValueError("weights must be positive and finite")
    x_mean = float(np.sum(w * xs) / np.sum(w))
    y_mean = float(np.sum(w * ys) / np.sum(w))
    sxx = float(np.sum(w * (xs - x_mean) ** 2))
    if sxx <= 0:
        raise ValueError("x is constant: no slope")
    slope = float(np.sum(w * (xs - x_mean) * (ys - y_mean)) / sxx)
    intercept = y_mean - slope * x_mean
    residuals = ys - intercept - slope * xs
    df = xs.size - 2
    s = math.sqrt(float(np.sum(w * residuals**2)) / df)
    se_slope = s / math.sqrt(sxx)
    se_intercept = s * math.sqrt(1.0 / float(np.sum(w)) + x_mean**2 / sxx)
    return LineFit(
        slope,
        intercept,
        s,
        se_slope,
        se_intercept,
        int(xs.size),
        df,
        sxx,
        x_mean,
        y_mean,
        weights is not None,
        float(np.sum(w)),
    )


def residuals_of(x: ArrayLike, y: ArrayLike, line: LineFit) -> FloatArray:
    return float_array(y) - line.intercept - line.slope * float_array(x)


def back_calculate(y: ArrayLike, line: LineFit) -> FloatArray:
    """The concentration each response reads back to: (y − b0) / b1."""
    return (float_array(y) - line.intercept) / line.slope


def deviation_percent(nominal: ArrayLike, found: ArrayLike) -> FloatArray:
    """(found − nominal) / nominal × 100; NaN for a zero nominal (a blank has no relative error)."""
    nominal_a, found_a = float_array(nominal), float_array(found)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = (found_a - nominal_a) / nominal_a * 100.0
    out[nominal_a == 0] = math.nan
    return out


@dataclass
class StandardsVerdict:
    """The acceptance of the back-calculated standards under a policy."""

    deviations: FloatArray  # % per standard (NaN for blanks)
    limits: FloatArray  # % allowed per standard (NaN for blanks)
    passing: NDArray[np.bool_]
    non_zero: int
    passed: int
    needed_share: float
    needed_count: int
    accepted: bool
    reasons: list[str] = field(default_factory=list)


def judge_standards(
    nominal: ArrayLike,
    deviations: ArrayLike,
    tolerance: float,
    tolerance_lowest: float,
    min_share: float,
    min_count: int,
) -> StandardsVerdict:
    """Each non-zero standard within ±tolerance % (±tolerance_lowest % at the lowest level); at
    least ``min_share`` of them and at least ``min_count`` passing."""
    x, dev = float_array(nominal), float_array(deviations)
    non_zero = x != 0
    lowest = float(np.min(x[non_zero])) if np.any(non_zero) else math.nan
    limits = np.where(x == lowest, tolerance_lowest, tolerance).astype(float)
    limits[~non_zero] = math.nan
    passing = non_zero & (np.abs(dev) <= limits + 1e-9)
    count, passed = int(non_zero.sum()), int(passing.sum())
    reasons = []
    if count and passed / count < min_share:
        reasons.append(f"{passed} of {count} standards pass, fewer than {min_share:.0%}")
    if passed < min_count:
        reasons.append(f"{passed} passing standards, fewer than {min_count}")
    return StandardsVerdict(
        dev, limits, passing, count, passed, min_share, min_count, not reasons, reasons
    )


LOD_FACTOR = 3.3
LOQ_FACTOR = 10.0


@dataclass(frozen=True)
class LimitBasis:
    sigma_name: str  # "residual SD", "SE of the intercept", "SD of the blanks"
    sigma: float
    lod: float
    loq: float


def detection_limits(
    line: LineFit,
    blank_sd: float | None = None,
    lod_factor: float = LOD_FACTOR,
    loq_factor: float = LOQ_FACTOR,
) -> list[LimitBasis]:
    """LOD = 3.3σ/S and LOQ = 10σ/S for each σ (ICH Q2(R1), from memory)."""
    bases = [("residual SD", line.residual_sd), ("SE of the intercept", line.se_intercept)]
    if blank_sd is not None and blank_sd > 0:
        bases.append(("SD of the blanks", blank_sd))
    slope = abs(line.slope)
    return [
        LimitBasis(name, sigma, lod_factor * sigma / slope, loq_factor * sigma / slope)
        for name, sigma in bases
    ]


@dataclass(frozen=True)
class ReadOff:
    concentration: float  # in the sample, after the dilution factor
    standard_uncertainty: float  # of the concentration, after the dilution factor
    inside: bool  # the read-off (before dilution) lies within the standards' range


def read_off(
    response: float,
    line: LineFit,
    x_low: float,
    x_high: float,
    replicates: int = 1,
    dilution: float = 1.0,
    sample_weight: float = 1.0,
) -> ReadOff:
    """x0 = (y0 − b0)/b1 and s(x0) = (s/b1)·√(1/m + 1/n + (y0 − ȳ)²/(b1²·Sxx)), both times the
    dilution factor (the usual formula for an unweighted line; Miller & Miller, Statistics and
    Chemometrics for Analytical Chemistry, section 5.6, from memory). For a weighted line, 1/m
    becomes 1/(w0·m) with w0 the weight of one reading at x0, n becomes Σw, and ȳ and Sxx are the
    weighted ones (the same book's section on weighted regression, from memory)."""
    if line.slope == 0 or not math.isfinite(line.slope):
        raise ValueError("a line of slope 0 reads no concentration")
    x0 = (response - line.intercept) / line.slope
    weight_sum = line.weight_sum if math.isfinite(line.weight_sum) else float(line.n)
    u = (
        line.residual_sd
        / abs(line.slope)
        * math.sqrt(
            1.0 / (sample_weight * replicates)
            + 1.0 / weight_sum
            + (response - line.y_mean) ** 2 / (line.slope**2 * line.sxx)
        )
    )
    span = max(abs(x_low), abs(x_high), 1.0)
    inside = x_low - 1e-12 * span <= x0 <= x_high + 1e-12 * span
    return ReadOff(x0 * dilution, u * abs(dilution), inside)


@dataclass(frozen=True)
class CoefficientTest:
    target: float
    t: float
    df: int
    p_value: float


def coefficient_test(value: float, se: float, df: int, target: float) -> CoefficientTest:
    """Two-sided t test of a coefficient against a target value."""
    t = (value - target) / se if se > 0 else math.inf
    p = float(2 * t_sf(abs(t), df)) if math.isfinite(t) else 0.0
    return CoefficientTest(target, t, df, p)
