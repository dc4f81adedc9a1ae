"""Inference from a solved fit: t and F tests, confidence intervals, R² and influence."""

from __future__ import annotations

import math

import numpy as np

from auditor.fit.distributions import f_sf, t_ppf, t_sf
from auditor.fit.lstsq import FloatArray


def _test(b: float, s: float, df: int) -> tuple[float, float]:
    """One two-sided Student t test, on plain floats (the same doubles as numpy's); a zero SE
    (perfect fit) gives t undefined and p 0."""
    if df <= 0:
        return math.nan, math.nan
    if s > 0.0:
        t = b / s
        # sf, not 1 - cdf: keeps p-values far below 1e-16 instead of rounding them to 0.
        return t, float(2.0 * t_sf(abs(t), df))
    if s == 0.0 and b != 0.0:
        return math.nan, 0.0  # an exact fit: no doubt that the coefficient differs from 0
    return math.nan, math.nan


def _tests(coef: FloatArray, se: FloatArray, df: int) -> tuple[FloatArray, FloatArray]:
    """:func:`_test` of each coefficient, as arrays."""
    tests = [_test(b, s, df) for b, s in zip(coef.tolist(), se.tolist(), strict=True)]
    t = np.array([t for t, _ in tests], dtype=np.float64).reshape(coef.shape)
    p = np.array([p for _, p in tests], dtype=np.float64).reshape(coef.shape)
    return t, p


def _intervals(
    coef: FloatArray, se: FloatArray, df: int, confidence: float
) -> tuple[FloatArray, FloatArray]:
    if df <= 0:
        return np.full(coef.shape, np.nan), np.full(coef.shape, np.nan)
    half = t_ppf(0.5 + confidence / 2.0, df) * se
    return coef - half, coef + half


def _r_squared(ss_regression: float, ss_residual: float, ss_total: float) -> float:
    if ss_total <= 0.0:
        return math.nan  # y constant (or all 0 through the origin): nothing to explain
    # Whichever share is smaller is known to more relative digits; derive the other from it.
    if ss_regression < ss_residual:
        return ss_regression / ss_total
    return 1.0 - ss_residual / ss_total


def _f_test(ss_regression: float, ss_residual: float, k: int, df: int) -> tuple[float, float]:
    if df <= 0:
        return math.nan, math.nan
    if ss_residual == 0.0:
        return (math.inf, 0.0) if ss_regression > 0.0 else (math.nan, math.nan)
    f = (ss_regression / k) / (ss_residual / df)
    return f, float(f_sf(f, k, df))


def _influence(
    residuals: FloatArray, leverage: FloatArray, residual_sd: float, p: int, df: int
) -> tuple[FloatArray, FloatArray]:
    """Internally studentised residuals and Cook's distances (common practice formulas)."""
    if df <= 0 or not math.isfinite(residual_sd) or residuals.size == 0:
        return np.zeros(0), np.zeros(0)
    # A point of leverage 1 is fitted exactly (residual 0 by construction); its weight shows in
    # the leverage itself, so its studentised residual and Cook's distance stay 0 rather than 0/0.
    inside = (leverage < 1.0 - 1e-12) & (residual_sd > 0.0)
    if inside.all():  # the usual case: every point, no selection to make
        one_minus_h = 1.0 - leverage
        studentized = residuals / (residual_sd * np.sqrt(one_minus_h))
        return studentized, studentized**2 * leverage / (p * one_minus_h)
    studentized = np.zeros(residuals.shape)
    cooks = np.zeros(residuals.shape)
    one_minus_h = 1.0 - leverage[inside]
    studentized[inside] = residuals[inside] / (residual_sd * np.sqrt(one_minus_h))
    cooks[inside] = studentized[inside] ** 2 * leverage[inside] / (p * one_minus_h)
    return studentized, cooks
