"""The shape of a calibration curve's residuals: does the scatter grow, do they bend or run."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from auditor.fit.calibration import fit_line, float_array
from auditor.fit.distributions import f_sf, norm_cdf, t_sf


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
    xs, ys, rs = float_array(x), float_array(y), float_array(residuals)
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
    xs, rs = float_array(x), float_array(residuals)
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
    xs, ys = float_array(x), float_array(y)
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
