"""The arithmetic a calibration reviewer redoes: plain functions over arrays, no workbook.

* :func:`fit_line` — the straight line by (weighted) least squares, with its standard errors;
* :func:`back_calculate` — each standard read back through the curve, and its deviation;
* :func:`judge_standards` — the acceptance of the back-calculated standards;
* :func:`spread_growth` — does the scatter grow with concentration (replicate F test or a rank
  test of the residual size against x);
* :func:`residual_runs` and :func:`curvature` — the shape of the residuals;
* :func:`detection_limits` — LOD = 3.3σ/S and LOQ = 10σ/S for each σ a laboratory may use;
* :func:`read_off` — a sample's concentration from its response, and its standard uncertainty
  from the calibration;
* :func:`coefficient_test` — t test of a coefficient against a target (intercept 0, slope 1).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from auditor.fit.distributions import f_sf, norm_cdf, t_sf

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


def _array(values: ArrayLike) -> FloatArray:
    return np.asarray(values, dtype=float).reshape(-1)


def fit_line(x: ArrayLike, y: ArrayLike, weights: ArrayLike | None = None) -> LineFit:
    """Least squares with an intercept; weighted when ``weights`` is given (any scale)."""
    xs, ys = _array(x), _array(y)
    w = np.ones_like(xs) if weights is None else _array(weights)
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
    return _array(y) - line.intercept - line.slope * _array(x)


def back_calculate(y: ArrayLike, line: LineFit) -> FloatArray:
    """The concentration each response reads back to: (y − b0) / b1."""
    return (_array(y) - line.intercept) / line.slope


def deviation_percent(nominal: ArrayLike, found: ArrayLike) -> FloatArray:
    """(found − nominal) / nominal × 100; NaN for a zero nominal (a blank has no relative error)."""
    nominal_a, found_a = _array(nominal), _array(found)
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
    x, dev = _array(nominal), _array(deviations)
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


@dataclass(frozen=True)
class SpreadTest:
    method: str  # in words
    statistic: float
    p_value: float
    ratio: float  # SD at the top over SD at the bottom (or NaN for the rank test)


def spread_growth(x: ArrayLike, y: ArrayLike, residuals: ArrayLike) -> SpreadTest | None:
    """Does the scatter grow with x? With replicates at the lowest and highest levels, the F
    test of their variances (one-sided, top > bottom); otherwise Spearman's rank correlation of
    |residual| with x (one-sided, growing). None when neither can be run."""
    xs, ys, rs = _array(x), _array(y), _array(residuals)
    levels = np.unique(xs)
    low, high = ys[xs == levels[0]], ys[xs == levels[-1]]
    if levels.size >= 2 and low.size >= 2 and high.size >= 2:
        var_low, var_high = float(np.var(low, ddof=1)), float(np.var(high, ddof=1))
        if var_low > 0:
            f = var_high / var_low
            p = float(f_sf(f, high.size - 1, low.size - 1))
            return SpreadTest(
                f"F test of the replicate variances at {levels[-1]:g} and {levels[0]:g}",
                f,
                p,
                math.sqrt(f),
            )
    if xs.size < 5 or levels.size < 3:
        return None
    from scipy import stats  # spearmanr only: scipy.stats is not imported at start-up

    rho, p_two = stats.spearmanr(xs, np.abs(rs))
    rho_f = float(rho)
    if not math.isfinite(rho_f):
        return None
    p = float(p_two) / 2 if rho_f > 0 else 1 - float(p_two) / 2
    return SpreadTest("Spearman rank correlation of |residual| with x", rho_f, p, math.nan)


@dataclass(frozen=True)
class RunsResult:
    runs: int
    positives: int
    negatives: int
    expected: float
    p_value: float  # one-sided: too few runs (a curve or a drift)
    longest: int


def residual_runs(x: ArrayLike, residuals: ArrayLike) -> RunsResult | None:
    """Wald–Wolfowitz runs of the residual signs ordered by x (level means where replicated)."""
    xs, rs = _array(x), _array(residuals)
    levels = np.unique(xs)
    means = np.array([rs[xs == v].mean() for v in levels])
    signs = means[np.abs(means) > 1e-12 * max(1.0, float(np.max(np.abs(rs))))] > 0
    n1, n2 = int(signs.sum()), int((~signs).sum())
    if n1 == 0 or n2 == 0 or signs.size < 4:
        return None
    runs = 1 + int(np.count_nonzero(signs[1:] != signs[:-1]))
    n = n1 + n2
    expected = 1 + 2 * n1 * n2 / n
    variance = 2 * n1 * n2 * (2 * n1 * n2 - n) / (n**2 * (n - 1))
    z = (runs - expected) / math.sqrt(variance) if variance > 0 else 0.0
    longest, current = 1, 1
    for a, b in zip(signs[:-1], signs[1:], strict=True):
        current = current + 1 if a == b else 1
        longest = max(longest, current)
    return RunsResult(runs, n1, n2, expected, float(norm_cdf(z)), longest)


@dataclass(frozen=True)
class CurvatureResult:
    quadratic: float
    se_quadratic: float
    t: float
    p_value: float
    s_line: float
    s_quadratic: float


def curvature(x: ArrayLike, y: ArrayLike) -> CurvatureResult | None:
    """Is a quadratic term significant? Its t test (equal to the square root of the F test of the
    second-order fit against the line), with both residual SDs."""
    xs, ys = _array(x), _array(y)
    if xs.size < 4 or np.unique(xs).size < 3:
        return None
    centre, scale = float(xs.mean()), float(np.ptp(xs)) or 1.0
    u = (xs - centre) / scale  # centred and scaled: a well-conditioned design matrix
    design = np.column_stack([np.ones_like(u), u, u**2])
    coef, _, rank, _ = np.linalg.lstsq(design, ys, rcond=None)
    if rank < 3:
        return None
    df = xs.size - 3
    resid = ys - design @ coef
    s_quad = math.sqrt(float(resid @ resid) / df)
    cov = np.linalg.inv(design.T @ design) * s_quad**2
    se = math.sqrt(float(cov[2, 2]))
    line = fit_line(xs, ys)
    quadratic = float(coef[2]) / scale**2
    t = float(coef[2]) / se if se > 0 else math.inf
    p = float(2 * t_sf(abs(t), df)) if math.isfinite(t) else 0.0
    return CurvatureResult(quadratic, se / scale**2, t, p, line.residual_sd, s_quad)


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
