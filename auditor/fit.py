"""Independent least squares: the "intended" fit every reported statistic is checked against.

The numbers must be trustworthy where spreadsheets are weakest, so the arithmetic is careful:

* simple regression (one x column) uses two-pass centred sums with ``math.fsum``: the mean first
  (refined by a second pass), then Sxx and Sxy of the deviations. Naive one-pass sums such as
  ``sum(x*x) - n*mean**2`` lose every digit when x carries a large offset (1e9 + small spread);
* several x columns use a QR factorisation of the centred design, never the normal equations,
  whose condition number is the square of the design's;
* without an intercept nothing is centred, and R² is the uncentred one (as spreadsheets and
  statsmodels define it).

Degenerate data never raise: :func:`fit_ols` returns a :class:`FitResult` whose ``status`` names
the problem and whose ``message`` says it in plain words. Only malformed input (unequal lengths,
NaN or infinity) raises ``ValueError``, because that is a bug in the caller, not in the workbook.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import stats as sps

from auditor.model import STAT_KEYS, clean_number

FloatArray = NDArray[np.float64]

# SSE at or below this share of SST is rounding noise (residuals ~1e-14 of the spread of y): the
# points lie on the line and the standard errors are exactly 0, not 1e-17.
PERFECT_FIT_RATIO = 1e-28

PER_SLOPE_KEYS = ("slope", "se_slope", "t_slope", "p_slope", "ci_slope_low", "ci_slope_high")


@dataclass
class FitResult:
    """One least-squares fit and everything reported about it; NaN marks what is undefined."""

    n: int
    k: int
    intercept: bool
    df: int
    status: str  # "ok" | "too-few-points" | "constant-x" | "collinear" | "perfect-fit"
    message: str
    slopes: FloatArray
    intercept_value: float
    se_slopes: FloatArray
    t_slopes: FloatArray
    p_slopes: FloatArray
    se_intercept: float | None
    t_intercept: float | None
    p_intercept: float | None
    ci_low: FloatArray
    ci_high: FloatArray
    confidence: float
    residual_sd: float
    r_squared: float
    adj_r_squared: float
    f: float
    f_p: float
    ss_regression: float
    ss_residual: float
    sxx: float  # k == 1 only (NaN otherwise): centred with an intercept, sum of x² without
    x_mean: float  # k == 1 only (NaN otherwise)
    y_mean: float
    # Per-observation diagnostics, always finite. Empty when the fit itself is undefined; the
    # studentised residuals and Cook's distances are also empty when df == 0 (no scatter to scale
    # by), 0.0 for a point of leverage 1 (the line passes through it exactly) and 0.0 throughout
    # a perfect fit.
    fitted: FloatArray
    residuals: FloatArray
    leverage: FloatArray
    studentized_residuals: FloatArray
    cooks_distance: FloatArray

    def stats(self) -> dict[str, float | int | None]:
        """The statistics under their JSON keys; per-slope keys get ``[j]`` when k > 1."""
        per_slope: dict[str, FloatArray] = {
            "slope": self.slopes,
            "se_slope": self.se_slopes,
            "t_slope": self.t_slopes,
            "p_slope": self.p_slopes,
            "ci_slope_low": self.ci_low,
            "ci_slope_high": self.ci_high,
        }
        shared: dict[str, float | int | None] = {
            "intercept": self.intercept_value,
            "se_intercept": self.se_intercept,
            "t_intercept": self.t_intercept,
            "p_intercept": self.p_intercept,
            "df": self.df,
            "n": self.n,
            "residual_sd": self.residual_sd,
            "r_squared": self.r_squared,
            "r": self._correlation(),
            "f": self.f,
            "ss_regression": self.ss_regression,
            "ss_residual": self.ss_residual,
        }
        out: dict[str, float | int | None] = {}
        for key in STAT_KEYS:
            if key in per_slope:
                values = per_slope[key]
                if self.k == 1:
                    out[key] = _plain(values[0])
                else:
                    for j, value in enumerate(values, start=1):
                        out[f"{key}[{j}]"] = _plain(value)
            else:
                out[key] = _plain(shared[key])
        return out

    def _correlation(self) -> float:
        # Signed for one x column (with or without intercept); the multiple R otherwise.
        if not math.isfinite(self.r_squared) or self.r_squared < 0.0:
            return math.nan
        root = math.sqrt(self.r_squared)
        return math.copysign(root, float(self.slopes[0])) if self.k == 1 else root


def _plain(value: float | int | np.floating | None) -> float | int | None:
    if value is None or isinstance(value, int):
        return value
    cleaned = clean_number(float(value))
    return cleaned if cleaned is None else float(cleaned)


def fit_ols(
    x: ArrayLike, y: ArrayLike, intercept: bool = True, confidence: float = 0.95
) -> FitResult:
    """Ordinary least squares of y on the column(s) of x, with or without a constant."""
    x_arr = np.asarray(x, dtype=np.float64)
    y_arr = np.asarray(y, dtype=np.float64)
    if x_arr.ndim == 1:
        x_arr = x_arr.reshape(-1, 1)
    if x_arr.ndim != 2 or x_arr.shape[1] == 0 or y_arr.ndim != 1:
        raise ValueError(
            f"x must be (n,) or (n, k) and y (n,), got {x_arr.shape} and {y_arr.shape}"
        )
    if x_arr.shape[0] != y_arr.shape[0]:
        raise ValueError(f"x has {x_arr.shape[0]} rows but y has {y_arr.shape[0]} values")
    if not (np.all(np.isfinite(x_arr)) and np.all(np.isfinite(y_arr))):
        raise ValueError("x and y must be finite: drop empty, text and error cells before fitting")
    if not 0.0 < confidence < 1.0:
        raise ValueError(f"confidence must lie strictly between 0 and 1, got {confidence!r}")
    n, k = x_arr.shape
    df = max(0, n - k - (1 if intercept else 0))  # never negative: no points left is 0 left
    return _finish(solve_centred(x_arr, y_arr, intercept), n, k, intercept, df, confidence)


def _finish(
    sol: Solution, n: int, k: int, intercept: bool, df: int, confidence: float
) -> FitResult:
    """Turn a solved fit into standard errors, tests, intervals and diagnostics."""
    status, message = sol.status, sol.message
    ss_total = sol.ss_total
    ss_residual = math.fsum(sol.residuals * sol.residuals) if status == "ok" else math.nan
    if status != "ok":
        pass  # the coefficients are undefined: every statistic below comes out NaN
    elif df == 0:
        status = "too-few-points"
        message = _too_few_message(n, k, intercept)
        ss_residual = 0.0  # the line interpolates every point; what is left is rounding
    elif ss_residual <= PERFECT_FIT_RATIO * ss_total:
        status = "perfect-fit"
        message = _perfect_message(n, ss_total)
        ss_residual = 0.0
    p = k + (1 if intercept else 0)

    residual_sd = math.sqrt(ss_residual / df) if df > 0 else math.nan
    se_slopes = residual_sd * np.sqrt(sol.g_diag)
    se_intercept = residual_sd * math.sqrt(sol.intercept_factor) if intercept else None
    t_slopes, p_slopes = _tests(sol.slopes, se_slopes, df)
    ci_low, ci_high = _intervals(sol.slopes, se_slopes, df, confidence)
    t_intercept: float | None = None
    p_intercept: float | None = None
    if se_intercept is not None:
        t_i, p_i = _tests(np.array([sol.intercept_value]), np.array([se_intercept]), df)
        t_intercept, p_intercept = float(t_i[0]), float(p_i[0])

    r_squared = _r_squared(sol.ss_regression, ss_residual, ss_total)
    adj_r_squared = math.nan
    if df > 0 and math.isfinite(r_squared):
        # Uncentred without a constant: n, not n - 1, in the numerator (statsmodels does so too).
        adj_r_squared = 1.0 - (1.0 - r_squared) * (n - (1 if intercept else 0)) / df
    f, f_p = _f_test(sol.ss_regression, ss_residual, k, df)

    studentized, cooks = _influence(sol.residuals, sol.leverage, residual_sd, p, df)
    return FitResult(
        n=n,
        k=k,
        intercept=intercept,
        df=df,
        status=status,
        message=message,
        slopes=sol.slopes,
        intercept_value=sol.intercept_value,
        se_slopes=se_slopes,
        t_slopes=t_slopes,
        p_slopes=p_slopes,
        se_intercept=se_intercept,
        t_intercept=t_intercept,
        p_intercept=p_intercept,
        ci_low=ci_low,
        ci_high=ci_high,
        confidence=confidence,
        residual_sd=residual_sd,
        r_squared=r_squared,
        adj_r_squared=adj_r_squared,
        f=f,
        f_p=f_p,
        ss_regression=sol.ss_regression,
        ss_residual=ss_residual,
        sxx=sol.sxx,
        x_mean=sol.x_mean,
        y_mean=sol.y_mean,
        fitted=sol.fitted,
        residuals=sol.residuals,
        leverage=sol.leverage,
        studentized_residuals=studentized,
        cooks_distance=cooks,
    )


def _tests(coef: FloatArray, se: FloatArray, df: int) -> tuple[FloatArray, FloatArray]:
    """Two-sided Student t tests; a zero SE (perfect fit) gives t undefined and p 0."""
    t = np.full(coef.shape, np.nan)
    p = np.full(coef.shape, np.nan)
    if df <= 0:
        return t, p
    for j, (b, s) in enumerate(zip(coef, se, strict=True)):
        if s > 0.0:
            t[j] = b / s
            # sf, not 1 - cdf: keeps p-values far below 1e-16 instead of rounding them to 0.
            p[j] = 2.0 * sps.t.sf(abs(t[j]), df)
        elif s == 0.0 and b != 0.0:
            p[j] = 0.0  # an exact fit: no doubt that the coefficient differs from 0
    return t, p


def _intervals(
    coef: FloatArray, se: FloatArray, df: int, confidence: float
) -> tuple[FloatArray, FloatArray]:
    if df <= 0:
        return np.full(coef.shape, np.nan), np.full(coef.shape, np.nan)
    half = sps.t.ppf(0.5 + confidence / 2.0, df) * se
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
    return f, float(sps.f.sf(f, k, df))


def _influence(
    residuals: FloatArray, leverage: FloatArray, residual_sd: float, p: int, df: int
) -> tuple[FloatArray, FloatArray]:
    """Internally studentised residuals and Cook's distances (common practice formulas)."""
    if df <= 0 or not math.isfinite(residual_sd) or residuals.size == 0:
        return np.zeros(0), np.zeros(0)
    studentized = np.zeros(residuals.shape)
    cooks = np.zeros(residuals.shape)
    # A point of leverage 1 is fitted exactly (residual 0 by construction); its weight shows in
    # the leverage itself, so its studentised residual and Cook's distance stay 0 rather than 0/0.
    inside = (leverage < 1.0 - 1e-12) & (residual_sd > 0.0)
    one_minus_h = 1.0 - leverage[inside]
    studentized[inside] = residuals[inside] / (residual_sd * np.sqrt(one_minus_h))
    cooks[inside] = studentized[inside] ** 2 * leverage[inside] / (p * one_minus_h)
    return studentized, cooks


def _too_few_message(n: int, k: int, intercept: bool) -> str:
    what = "a line" if k == 1 else f"{k} x columns"
    const = " with an intercept" if intercept else " through the origin"
    need = k + (2 if intercept else 1)
    return (
        f"only {n} points for {what}{const}: the fit passes through every point, so no degrees "
        f"of freedom remain for standard errors, t or p (at least {need} points are needed)"
    )


def _perfect_message(n: int, ss_total: float) -> str:
    if ss_total == 0.0:
        return f"all {n} y values are equal: the fit is exact, so R² and t are undefined"
    return (
        f"the {n} points lie exactly on the fitted line (residual sum of squares 0 to rounding): "
        "standard errors are 0, t is unbounded and p is 0"
    )


# --- solving: coefficients, residuals, leverage ------------------------------------------------


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


# |R_jj| at or below this share of the column's own norm: column j lies in the span of the earlier
# columns (and the constant) to within rounding, so its slope cannot be separated from theirs.
COLLINEAR_RATIO = 1e-10


def _mean(values: FloatArray) -> float:
    """Mean by fsum, refined by a second pass over the deviations (two-pass algorithm)."""
    if values.size == 0:
        return math.nan
    first = math.fsum(values) / values.size
    return first + math.fsum(values - first) / values.size


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
    ss_total = math.fsum(y_c * y_c)
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
    sxx = math.fsum(x_c * x_c)
    sxy = math.fsum(x_c * y_c)
    slope = sxy / sxx
    intercept_value = y_mean - slope * x_mean if intercept else 0.0
    # Residuals from the centred quantities: no cancellation against a large offset in x or y.
    residuals = y_c - slope * x_c
    leverage = x_c * x_c / sxx + (1.0 / x.size if intercept else 0.0)
    return Solution(
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
    )


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
    q, r = np.linalg.qr(x_c)  # reduced: q (n, k), r (k, k) upper triangular
    norms = np.sqrt(np.einsum("ij,ij->j", x_c, x_c))
    for j in range(1, k):
        if abs(r[j, j]) <= COLLINEAR_RATIO * norms[j]:
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
    slopes = np.linalg.solve(r, qty) if k > 0 else np.zeros(0)
    r_inv = np.linalg.solve(r, np.eye(k))  # R^-1, so (Xc'Xc)^-1 = R^-1 R^-T
    g_diag = np.einsum("ij,ij->i", r_inv, r_inv)
    intercept_factor = math.nan
    intercept_value = 0.0
    if intercept:
        projected = r_inv.T @ means  # x̄' (Xc'Xc)^-1 x̄ = |R^-T x̄|²
        intercept_factor = 1.0 / n + float(projected @ projected)
        intercept_value = y_mean - math.fsum(slopes * means)
    residuals = y_c - x_c @ slopes
    leverage = np.einsum("ij,ij->i", q, q) + (1.0 / n if intercept else 0.0)
    return Solution(
        status="ok",
        message="",
        slopes=slopes,
        intercept_value=intercept_value,
        g_diag=g_diag,
        intercept_factor=intercept_factor,
        fitted=y - residuals,
        residuals=residuals,
        leverage=leverage,
        ss_regression=math.fsum(qty * qty),
        ss_total=ss_total,
        sxx=math.nan,
        x_mean=math.nan,
        y_mean=y_mean,
    )
