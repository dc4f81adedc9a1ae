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

The solving lives in :mod:`auditor.fit.lstsq` and the tests and intervals in
:mod:`auditor.fit.inference`; this module turns them into a :class:`FitResult`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from auditor.fit.conditioning import AllowanceInputs, Conditioning
from auditor.fit.inference import _f_test, _influence, _intervals, _r_squared, _test, _tests
from auditor.fit.lstsq import COLLINEAR_RATIO, FloatArray, Solution, solve_centred
from auditor.fit.sums import exact_sum
from auditor.model import STAT_KEYS, clean_number

__all__ = [
    "COLLINEAR_RATIO",
    "PERFECT_FIT_RATIO",
    "PER_SLOPE_KEYS",
    "FitResult",
    "FloatArray",
    "Solution",
    "fit_ols",
    "solve_centred",
]


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
    conditioning: Conditioning | None = None  # None when the fit itself is undefined

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
    if not (np.isfinite(x_arr).all() and np.isfinite(y_arr).all()):
        raise ValueError("x and y must be finite: drop empty, text and error cells before fitting")
    if not 0.0 < confidence < 1.0:
        raise ValueError(f"confidence must lie strictly between 0 and 1, got {confidence!r}")
    n, k = x_arr.shape
    df = max(0, n - k - (1 if intercept else 0))  # never negative: no points left is 0 left
    solution = solve_centred(x_arr, y_arr, intercept)
    result = _finish(solution, n, k, intercept, df, confidence)
    if result.conditioning is not None and result.slopes.size and np.isfinite(result.slopes).all():
        coefficients = result.slopes
        inverse = solution.g_diag
        if intercept:
            coefficients = np.concatenate(([result.intercept_value], result.slopes))
            inverse = np.concatenate(([solution.intercept_factor], solution.g_diag))
        inputs = AllowanceInputs(
            x_arr,
            y_arr,
            intercept,
            coefficients,
            inverse,
            result.ss_residual,
            solution.ss_total,
            df,
        )
        held = result.conditioning  # a new record, as dataclasses.replace would make
        result.conditioning = Conditioning(
            held.condition_number, held.condition_number_centred, held.solver, inputs
        )
    return result


def _finish(
    sol: Solution, n: int, k: int, intercept: bool, df: int, confidence: float
) -> FitResult:
    """Turn a solved fit into standard errors, tests, intervals and diagnostics."""
    status, message = sol.status, sol.message
    ss_total = sol.ss_total
    ss_residual = exact_sum(sol.residuals * sol.residuals) if status == "ok" else math.nan
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
        t_intercept, p_intercept = _test(float(sol.intercept_value), se_intercept, df)

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
        conditioning=sol.conditioning,
    )


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
