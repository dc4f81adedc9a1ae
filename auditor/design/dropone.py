"""The slope and its p-value with each observation left out, in closed form.

Refitting n times costs O(n²); the leave-one-out identities of least squares give every refit
from the full fit in O(n) (common practice; Cook & Weisberg, "Residuals and Influence in
Regression", from memory). With c_i = x_i − x̄ (x_i through the origin), residual e_i and
leverage h_i:

    b1(−i)  = b1 − c_i·e_i / (Sxx·(1 − h_i))
    SSE(−i) = SSE − e_i² / (1 − h_i)
    Sxx(−i) = Sxx − c_i²·n/(n − 1)      (Sxx − c_i² through the origin)

and SE, t, p follow with df − 1. A point of leverage 1 cannot be left out: without it the other
x values are all equal and no slope exists. tests/test_design_dropone.py checks these against
statsmodels' leave-one-out refits.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from auditor.design.rows import Rows
from auditor.fit.distributions import t_sf
from auditor.fit.ols import FitResult

# Leverage within this of 1: the point is the only one away from the others' common x.
LEVERAGE_ONE = 1e-9
# Points taken at a time by leave_one_out (its temporaries are arrays of this many).
CHUNK = 1 << 16


@dataclass(frozen=True)
class DropOne:
    slope_min: float | None
    slope_max: float | None
    p_min: float | None
    p_max: float | None
    p_min_row: int | None  # the row whose removal gives the smallest p
    p_max_row: int | None
    crossing_rows: int  # rows whose removal moves p across alpha
    crossing_row: int | None  # of those, the one that moves p furthest
    crossing_p: float | None  # p without that row
    undefined_row: int | None  # a row without which the slope is undefined (leverage 1)
    sign_flip_row: int | None  # a row without which the slope changes sign


def leave_one_out(
    x: np.ndarray, fit: FitResult
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Per observation: slope, SE, t and two-sided p with it left out (NaN where undefined)."""
    slope, se, t, p = _left_out(x, fit, (0, 1, 2, 3))
    return slope, se, t, p


def slopes_and_p_without(x: np.ndarray, fit: FitResult) -> tuple[np.ndarray, np.ndarray]:
    """:func:`leave_one_out`'s slope and p alone (what the drop-one summary reads): two arrays
    of n kept rather than four."""
    slope, p = _left_out(x, fit, (0, 3))
    return slope, p


def _left_out(x: np.ndarray, fit: FitResult, wanted: tuple[int, ...]) -> list[np.ndarray]:
    """Of slope, SE, t and p without each observation, those at the positions ``wanted``."""
    n = x.size
    df = fit.df - 1
    keep = fit.leverage < 1.0 - LEVERAGE_ONE
    if df < 1 or not keep.any():
        return [np.full(n, np.nan) for _ in wanted]
    factor = n / (n - 1) if fit.intercept else 1.0
    out = [np.empty(n) for _ in wanted]
    if not keep.all():  # a point of leverage 1 cannot be left out: NaN there
        for array in out:
            array[~keep] = np.nan
    # Piece by piece: every step is element by element (the same numbers as whole arrays, bit
    # for bit), and a million rows need a dozen temporary arrays of a piece, not of n (95 MB).
    for start in range(0, n, CHUNK):
        stop = min(start + CHUNK, n)
        part = keep[start:stop]
        whole = bool(part.all())  # the usual case: no point of leverage 1, nothing to select
        pick = slice(None) if whole else part
        centred = x[start:stop] - fit.x_mean if fit.intercept else x[start:stop]
        e, h = fit.residuals[start:stop], fit.leverage[start:stop]
        kept = _without_each(centred[pick], e[pick], 1.0 - h[pick], factor, fit, df)
        for array, index in zip(out, wanted, strict=True):
            array[start:stop][pick] = kept[index]
    return out


def _without_each(
    centred: np.ndarray,
    e: np.ndarray,
    one_minus_h: np.ndarray,
    factor: float,
    fit: FitResult,
    df: int,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Slope, SE, t and p without each of the points given (none of leverage 1); ``factor``
    turns a point's squared deviation into what leaving it out takes from Sxx."""
    b1 = float(fit.slopes[0])
    slope = b1 - centred * e / (fit.sxx * one_minus_h)
    sse = np.maximum(fit.ss_residual - e**2 / one_minus_h, 0.0)
    sxx = fit.sxx - centred**2 * factor
    positive = sxx > 1e-12 * fit.sxx
    if positive.all():
        se = np.sqrt(sse / df / sxx)
    else:
        se = np.full(sse.shape, np.nan)
        se[positive] = np.sqrt(sse[positive] / df / sxx[positive])
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(se > 0.0, slope / se, np.nan)
    p = np.where(np.isfinite(t), 2.0 * t_sf(np.abs(t), df), np.nan)
    # An exact fit without the point: SE 0 and a non-zero slope leave no doubt (p = 0).
    exact = (se == 0.0) & (slope != 0.0)
    p[exact] = 0.0
    return slope, se, t, p


def drop_one(
    x: np.ndarray,
    y: np.ndarray,
    fit: FitResult,
    rows: Rows,
    alpha: float,
    left_out: tuple[np.ndarray, np.ndarray] | None = None,
) -> DropOne | None:
    """How far the slope and p move when any one observation is left out (``left_out``: what
    :func:`slopes_and_p_without` gave, when the caller has it already)."""
    del y  # the residuals of the fit carry what is needed
    if fit.df < 2 or len(fit.residuals) != x.size:
        return None
    slope, p = left_out if left_out is not None else slopes_and_p_without(x, fit)
    h = fit.leverage
    undefined = [rows[i] for i in np.flatnonzero(h >= 1.0 - LEVERAGE_ONE).tolist()]
    finite_p = np.isfinite(p)
    finite_b = np.isfinite(slope)
    full_p = float(fit.p_slopes[0])
    b1 = float(fit.slopes[0])
    significant = full_p < alpha
    with np.errstate(invalid="ignore"):
        crossing = np.flatnonzero(finite_p & ((p < alpha) != significant)).tolist()
    crossing_row: int | None = None
    crossing_p: float | None = None
    if crossing:
        pick = max(crossing, key=lambda i: abs(math.log10(max(float(p[i]), 1e-300) / alpha)))
        crossing_row, crossing_p = rows[pick], float(p[pick])
    with np.errstate(invalid="ignore"):
        flips = np.flatnonzero(finite_b & (slope * b1 < 0.0)).tolist()
    flip_row = rows[max(flips, key=lambda i: abs(slope[i]))] if flips else None
    # No selection, and argmin for nanargmin, when nothing is NaN (the usual case).
    slopes = slope if finite_b.all() else slope[finite_b]
    every_p = p.size > 0 and bool(finite_p.all())
    any_p = every_p or bool(finite_p.any())
    ps = p if every_p else p[finite_p]
    return DropOne(
        slope_min=float(slopes.min()) if slopes.size else None,
        slope_max=float(slopes.max()) if slopes.size else None,
        p_min=float(ps.min()) if any_p else None,
        p_max=float(ps.max()) if any_p else None,
        p_min_row=rows[int(p.argmin() if every_p else np.nanargmin(p))] if any_p else None,
        p_max_row=rows[int(p.argmax() if every_p else np.nanargmax(p))] if any_p else None,
        crossing_rows=len(crossing),
        crossing_row=crossing_row,
        crossing_p=crossing_p,
        undefined_row=undefined[0] if undefined else None,
        sign_flip_row=flip_row,
    )
