"""Least-squares solving: coefficients, residuals and leverage, computed without cancellation.

One x column uses two-pass centred sums with ``math.fsum``; several use a QR factorisation of the
centred design with its columns scaled to unit length (never the normal equations). Both give the
design's condition numbers (:mod:`auditor.fit.conditioning`); when these say that double
precision may lose digits (more than two, :data:`EXACT_ABOVE`) and the fit is small enough, the
coefficients, residuals and standard-error factors are refined to the exact least-squares
solution of the stored doubles (:mod:`auditor.fit.exact`); a larger fit with several x columns
gets iterative refinement in twice double precision instead (:mod:`auditor.fit.refine`).
Degenerate designs give a :class:`Solution` whose ``status`` says why the coefficients are
undefined; :mod:`auditor.fit.ols` builds the statistics.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from auditor.fit.conditioning import Conditioning, design_conditioning, simple_conditioning
from auditor.fit.exact import solve_exact, within_budget
from auditor.fit.refine import refine
from auditor.fit.sums import exact_sum

FloatArray = NDArray[np.float64]


@dataclass
class Solution:
    """The coefficients of a fit and what the statistics are built from."""

    status: str  # "ok", or why the coefficients are undefined
    message: str
    slopes: FloatArray
    intercept_value: float
    g_diag: FloatArray  # diagonal of (Xc'Xc)^-1: SE(b_j) = s * sqrt(g_diag[j])
    intercept_factor: float  # SE(b0) = s * sqrt(intercept_factor)
    fitted: FloatArray
    residuals: FloatArray
    leverage: FloatArray
    ss_regression: float
    ss_total: float  # centred with an intercept, uncentred without
    sxx: float
    x_mean: float
    y_mean: float
    conditioning: Conditioning | None = None


# A condition number above this puts more than two of the ~16 digits of a double at risk: the fit
# is refined in exact arithmetic. Below it the scaled QR keeps 13 digits or more (NIST Pontius,
# κ = 18: LRE 13.2) and well-conditioned fits keep the fast double-precision path.
EXACT_ABOVE = 100.0

# |R_jj| at or below this share of the column's own norm: column j lies in the span of the earlier
# columns (and the constant) to within rounding, so its slope cannot be separated from theirs.
COLLINEAR_RATIO = 1e-10


def _mean(values: FloatArray) -> float:
    """Mean by fsum, refined by a second pass over the deviations (two-pass algorithm)."""
    if values.size == 0:
        return math.nan
    first = exact_sum(values) / values.size
    return first + exact_sum(values - first) / values.size


def solve_centred(x: FloatArray, y: FloatArray, intercept: bool) -> Solution:
    n, k = x.shape
    y_mean = _mean(y)
    x_mean = _mean(x[:, 0]) if k == 1 else math.nan
    need = k + (1 if intercept else 0)
    if n < need:
        what = "a line" if k == 1 else f"{k} slopes"
        const = " with an intercept" if intercept else " through the origin"
        return _undefined(
            "too-few-points",
            f"{n} point{'' if n == 1 else 's'} cannot determine {what}{const}: at least {need} "
            f"are needed for the coefficients and {need + 1} for their standard errors",
            k,
            intercept,
            x_mean,
            y_mean,
        )
    constant = _constant_column_message(x, intercept)
    if constant:
        undefined = _undefined("constant-x", constant, k, intercept, x_mean, y_mean)
        if k == 1:
            undefined.sxx = 0.0  # a true fact, and what design checks need to say "no spread"
        return undefined
    y_c = y - y_mean if intercept else y
    ss_total = exact_sum(y_c * y_c)
    if k == 1:
        return _solve_simple(x[:, 0], y, y_c, intercept, x_mean, y_mean, ss_total)
    return _solve_qr(x, y, y_c, intercept, y_mean, ss_total)


def _undefined(
    status: str, message: str, k: int, intercept: bool, x_mean: float, y_mean: float
) -> Solution:
    nothing = np.zeros(0)
    return Solution(
        status=status,
        message=message,
        slopes=np.full(k, np.nan),
        intercept_value=math.nan if intercept else 0.0,
        g_diag=np.full(k, np.nan),
        intercept_factor=math.nan,
        fitted=nothing,
        residuals=nothing,
        leverage=nothing,
        ss_regression=math.nan,
        ss_total=math.nan,
        sxx=math.nan,
        x_mean=x_mean,
        y_mean=y_mean,
    )


def _constant_column_message(x: FloatArray, intercept: bool) -> str:
    n, k = x.shape
    for j in range(k):
        column = x[:, j]
        label = "x" if k == 1 else f"x column {j + 1}"
        if intercept and np.all(column == column[0]):
            return (
                f"all {n} {label} values are equal ({float(column[0])!r}): the slope is undefined"
            )
        if not intercept and not np.any(column):
            return f"all {n} {label} values are 0: a line through the origin has no slope to fit"
    return ""


def _solve_simple(
    x: FloatArray,
    y: FloatArray,
    y_c: FloatArray,
    intercept: bool,
    x_mean: float,
    y_mean: float,
    ss_total: float,
) -> Solution:
    x_c = x - x_mean if intercept else x
    sxx = exact_sum(x_c * x_c)
    sxy = exact_sum(x_c * y_c)
    slope = sxy / sxx
    intercept_value = y_mean - slope * x_mean if intercept else 0.0
    # Residuals from the centred quantities: no cancellation against a large offset in x or y.
    residuals = y_c - slope * x_c
    leverage = x_c * x_c / sxx + (1.0 / x.size if intercept else 0.0)
    kappa, kappa_centred = simple_conditioning(x.size, x_mean, sxx, intercept)
    solution = Solution(
        status="ok",
        message="",
        slopes=np.array([slope]),
        intercept_value=intercept_value,
        g_diag=np.array([1.0 / sxx]),
        intercept_factor=(1.0 / x.size + x_mean * x_mean / sxx) if intercept else math.nan,
        fitted=y - residuals,
        residuals=residuals,
        leverage=leverage,
        ss_regression=sxy * sxy / sxx,
        ss_total=ss_total,
        sxx=sxx,
        x_mean=x_mean,
        y_mean=y_mean,
        conditioning=Conditioning(kappa, kappa_centred, "double"),
    )
    return _refined(solution, x.reshape(-1, 1), y, intercept)


def _solve_qr(
    x: FloatArray,
    y: FloatArray,
    y_c: FloatArray,
    intercept: bool,
    y_mean: float,
    ss_total: float,
) -> Solution:
    n, k = x.shape
    means = np.array([_mean(x[:, j]) for j in range(k)]) if intercept else np.zeros(k)
    x_c = x - means
    norms = np.sqrt(np.einsum("ij,ij->j", x_c, x_c))
    # Unit-length columns: the factorisation's error then follows the design's own conditioning,
    # not the columns' units (x and x^5 differ by 10^6 in scale on 0..20).
    q, r_scaled = np.linalg.qr(x_c / norms)  # reduced: q (n, k), r (k, k) upper triangular
    for j in range(1, k):
        if abs(r_scaled[j, j]) <= COLLINEAR_RATIO:
            others = "x column 1" if j == 1 else f"x columns 1-{j}"
            const = " and the constant" if intercept else ""
            return _undefined(
                "collinear",
                f"x column {j + 1} is a linear combination of {others}{const}: "
                "their slopes cannot be told apart",
                k,
                intercept,
                math.nan,
                y_mean,
            )
    qty = q.T @ y_c
    slopes = np.linalg.solve(r_scaled, qty) / norms
    # R^-1 of the unscaled centred columns is D^-1 R_s^-1, so (Xc'Xc)^-1 = R^-1 R^-T.
    r_inv = np.linalg.solve(r_scaled, np.eye(k)) / norms[:, np.newaxis]
    g_diag = np.einsum("ij,ij->i", r_inv, r_inv)
    intercept_factor = math.nan
    intercept_value = 0.0
    if intercept:
        projected = r_inv.T @ means  # x̄' (Xc'Xc)^-1 x̄ = |R^-T x̄|²
        intercept_factor = 1.0 / n + float(projected @ projected)
        intercept_value = y_mean - exact_sum(slopes * means)
    residuals = y_c - x_c @ slopes
    leverage = np.einsum("ij,ij->i", q, q) + (1.0 / n if intercept else 0.0)
    kappa, kappa_centred = design_conditioning(r_scaled, norms, means, n, intercept)
    solution = Solution(
        status="ok",
        message="",
        slopes=slopes,
        intercept_value=intercept_value,
        g_diag=g_diag,
        intercept_factor=intercept_factor,
        fitted=y - residuals,
        residuals=residuals,
        leverage=leverage,
        ss_regression=exact_sum(qty * qty),
        ss_total=ss_total,
        sxx=math.nan,
        x_mean=math.nan,
        y_mean=y_mean,
        conditioning=Conditioning(kappa, kappa_centred, "double"),
    )
    return _refined(solution, x, y, intercept, (r_scaled, norms, means))


def _refined(
    solution: Solution,
    x: FloatArray,
    y: FloatArray,
    intercept: bool,
    factor: tuple[FloatArray, FloatArray, FloatArray] | None = None,
) -> Solution:
    """The exact solution of the stored doubles where conditioning puts digits at risk; beyond
    the exact budget, the QR solution refined with residuals in twice double precision.

    The leverage (a diagnostic, not a reported statistic) stays from the factorisation.
    """
    conditioning = solution.conditioning
    if conditioning is None or conditioning.condition_number <= EXACT_ABOVE:
        return solution
    n, k = x.shape
    if not within_budget(n, k + (1 if intercept else 0)):
        if factor is None or not np.all(np.abs(x) < 1e150):
            return solution  # one x column: the centred sums are already accurate
        b0, slopes, residuals = refine(
            x, y, intercept, *factor, solution.intercept_value, solution.slopes
        )
        solution.slopes, solution.residuals, solution.fitted = slopes, residuals, y - residuals
        if intercept:
            solution.intercept_value = b0
        ss_residual = exact_sum(residuals * residuals)
        solution.ss_regression = max(0.0, solution.ss_total - ss_residual)
        solution.conditioning = Conditioning(
            conditioning.condition_number, conditioning.condition_number_centred, "refined"
        )
        return solution
    exact = solve_exact(x, y, intercept)
    if exact is None:
        return solution
    first = 1 if intercept else 0
    solution.slopes = exact.coefficients[first:]
    solution.g_diag = exact.inverse_diagonal[first:]
    if intercept:
        solution.intercept_value = float(exact.coefficients[0])
        solution.intercept_factor = float(exact.inverse_diagonal[0])
    solution.residuals = exact.residuals
    solution.fitted = y - exact.residuals
    solution.ss_total = exact.ss_total
    solution.ss_regression = exact.ss_regression
    solution.conditioning = Conditioning(
        conditioning.condition_number, conditioning.condition_number_centred, "exact"
    )
    return solution
