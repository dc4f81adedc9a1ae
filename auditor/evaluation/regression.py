"""Regression functions: SLOPE, INTERCEPT, RSQ, STEYX, CORREL, FORECAST, LINEST and TREND."""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from auditor.evaluation.coerce import _as_2d, _num, _numeric_view, _truthy
from auditor.evaluation.operators import _lift
from auditor.evaluation.values import (
    _DIV0,
    _NA,
    _NUM,
    _REF,
    _VALUE,
    MISSING,
    Fault,
    NodeEvaluator,
    RangedFn,
    RangeValue,
    _Ctx,
)
from auditor.read.workbook import ErrorValue


def _pairs(known_y: Any, known_x: Any) -> tuple[np.ndarray, np.ndarray]:
    """The (y, x) pairs SLOPE and its kin use: both cells numbers; text, logicals, blanks drop."""
    y_view, x_view = _numeric_view(known_y), _numeric_view(known_x)
    if y_view.values.size != x_view.values.size:
        raise Fault(_NA)  # Excel; LibreOffice writes #VALUE!
    errors = [(v.error_at, v.error) for v in (y_view, x_view) if v.error is not None]
    if errors:
        raise Fault(min(errors, key=lambda e: e[0])[1].code)
    keep = y_view.is_number & x_view.is_number
    return y_view.values[keep], x_view.values[keep]


@dataclass(frozen=True)
class _Moments:
    n: int
    x_mean: float
    y_mean: float
    sxx: float
    syy: float
    sxy: float
    ssresid: float  # residual sum of squares about the fitted line (NaN when Sxx is 0)

    @staticmethod
    def of(known_y: Any, known_x: Any) -> _Moments:
        if isinstance(known_y, RangeValue) and isinstance(known_x, RangeValue):
            found: _Moments = known_y.paired(known_x, _Moments.now)  # one pair's sums, once
            return found
        return _Moments.now(known_y, known_x)

    @staticmethod
    def now(known_y: Any, known_x: Any) -> _Moments:
        y, x = _pairs(known_y, known_x)
        if y.size == 0:
            raise Fault(_DIV0)
        dx, dy = x - x.mean(), y - y.mean()  # two-pass sums: no cancellation in Sxx
        sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
        residuals = dy - (sxy / sxx) * dx if sxx > 0 else np.full(1, np.nan)
        return _Moments(
            y.size, float(x.mean()), float(y.mean()), sxx, syy, sxy, float(residuals @ residuals)
        )

    @property
    def slope(self) -> float:
        if self.sxx == 0:
            raise Fault(_DIV0)
        return self.sxy / self.sxx


def _numeric_block(value: Any) -> np.ndarray:
    """A block for LINEST and TREND: every cell must be a number (errors propagate)."""
    view = _numeric_view(value)
    if view.error is not None:
        raise Fault(view.error.code)
    if not view.is_number.all():
        raise Fault(_VALUE)
    return view.values.reshape(_as_2d(value).shape)


def _design(known_y: Any, known_x: Any) -> tuple[np.ndarray, np.ndarray]:
    """(y as n, X as n x k) from LINEST's arguments; the x variables are the columns of x for a
    column of y and the rows of x for a row of y."""
    y_block = _numeric_block(known_y)
    n_rows, n_cols = y_block.shape
    if known_x is MISSING:
        n = y_block.size
        return y_block.ravel(), np.arange(1.0, n + 1).reshape(n, 1)
    x_block = _numeric_block(known_x)
    if n_cols == 1 and x_block.shape[0] == n_rows:
        return y_block[:, 0], x_block
    if n_rows == 1 and x_block.shape[1] == n_cols:
        return y_block[0, :], x_block.T
    if x_block.shape == y_block.shape:
        return y_block.ravel(), x_block.reshape(-1, 1)
    raise Fault(_REF)  # Excel; LibreOffice writes #VALUE!


@dataclass(frozen=True)
class _Fit:
    coef: np.ndarray  # in the order of the x columns
    intercept: float
    se: np.ndarray
    se_intercept: float | None
    r2: float
    sey: float
    f: float | None
    df: int
    ssreg: float
    ssresid: float


def _independent_columns(xc: np.ndarray) -> list[int]:
    """The x columns kept after Excel's collinearity rule: a column that is (numerically) a
    combination of the others is removed and reported with coefficient 0 and error 0."""
    if xc.shape[1] == 0:
        return []
    # Unit-length columns: dependence is a property of directions, not of units (x¹⁰ beside x
    # is not "negligible" because its values are larger).
    norms = np.sqrt(np.einsum("ij,ij->j", xc, xc))
    nonzero = np.flatnonzero(norms > 0.0)
    if nonzero.size == 0:
        return []
    from scipy import linalg  # here: a workbook without LINEST or TREND does not need it

    _, r, pivots = linalg.qr(xc[:, nonzero] / norms[nonzero], mode="economic", pivoting=True)
    diag = np.abs(np.diag(r))
    tolerance = diag[0] * max(xc.shape) * 1e-13
    return sorted(int(nonzero[p]) for p in pivots[: int((diag > tolerance).sum())])


def _least_squares(y: np.ndarray, x: np.ndarray, const: bool) -> _Fit:
    from scipy import linalg  # here: a workbook without LINEST or TREND does not need it

    n, k = x.shape
    x_mean = x.mean(axis=0) if const else np.zeros(k)
    y_mean = float(y.mean()) if const else 0.0
    xc, yc = x - x_mean, y - y_mean  # centring keeps the problem well conditioned
    kept = _independent_columns(xc)
    rank = len(kept)
    df = n - rank - (1 if const else 0)
    if rank == 0 or df < 0:
        raise Fault(_NUM)
    norms = np.sqrt(np.einsum("ij,ij->j", xc[:, kept], xc[:, kept]))
    q, r = np.linalg.qr(xc[:, kept] / norms)  # unit-length columns, as in auditor.fit.lstsq
    r = r * norms  # the factor of the unscaled columns: xc[:, kept] = q @ (r_s D)
    coef = np.zeros(k)
    coef[kept] = linalg.solve_triangular(r, q.T @ yc)
    fitted = xc @ coef
    resid = yc - fitted
    ssresid = float(resid @ resid)
    ssreg = float(fitted @ fitted)  # about the mean when const: the centred model's fit
    sstotal = ssreg + ssresid
    sigma2 = ssresid / df if df > 0 else 0.0  # LibreOffice reports zero errors at df = 0
    r_inv = linalg.solve_triangular(r, np.eye(rank))
    unscaled = np.zeros((k, k))
    unscaled[np.ix_(kept, kept)] = r_inv @ r_inv.T
    se = np.sqrt(np.diag(unscaled) * sigma2)
    se_intercept = None
    if const:
        se_intercept = math.sqrt(sigma2 * (1.0 / n + float(x_mean @ unscaled @ x_mean)))
    f_stat = (ssreg / rank) / (ssresid / df) if df > 0 and ssresid > 0 else None
    intercept = y_mean - float(x_mean @ coef) if const else 0.0
    r2 = ssreg / sstotal if sstotal > 0 else 1.0  # a constant y: LibreOffice reports 1
    return _Fit(
        coef, intercept, se, se_intercept, r2, math.sqrt(sigma2), f_stat, df, ssreg, ssresid,
    )  # fmt: skip


def _linest_table(fit: _Fit, with_stats: bool) -> np.ndarray:
    k = fit.coef.size
    na = ErrorValue(_NA)
    table = np.full((5 if with_stats else 1, k + 1), na, dtype=object)
    table[0, :k] = [float(c) for c in fit.coef[::-1]]  # the x columns in reverse order
    table[0, k] = fit.intercept
    if with_stats:
        table[1, :k] = [float(s) for s in fit.se[::-1]]
        table[1, k] = na if fit.se_intercept is None else fit.se_intercept
        table[2, :2] = [fit.r2, fit.sey]
        table[3, :2] = [na if fit.f is None else fit.f, float(fit.df)]
        table[4, :2] = [fit.ssreg, fit.ssresid]
    return table


def _flag(args: Sequence[Any], index: int, default: bool) -> bool:
    if len(args) <= index or args[index] is MISSING:
        return default
    value = args[index]
    if isinstance(value, RangeValue | np.ndarray):
        value = _as_2d(value)[0, 0]
    return _truthy(value)


def _steyx(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> float:
    moments = _Moments.of(args[0], args[1])
    if moments.n < 3:
        raise Fault(_DIV0)  # Excel; LibreOffice writes #VALUE!
    return math.sqrt(moments.ssresid / (moments.n - 2))


def _rsq(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    if m.sxx == 0 or m.syy == 0:
        raise Fault(_DIV0)
    return m.sxy * m.sxy / (m.sxx * m.syy)


def _correl(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    if m.sxx == 0 or m.syy == 0:
        raise Fault(_DIV0)
    return m.sxy / math.sqrt(m.sxx * m.syy)


def _intercept(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    return m.y_mean - m.slope * m.x_mean


def _forecast(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> Any:
    target = ev._operand(args[0], ctx)
    m = _Moments.of(args[1], args[2])
    slope = m.slope
    return _lift(lambda x: m.y_mean + slope * (_num(x) - m.x_mean), [target])


def _linest(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> np.ndarray:
    known_x = args[1] if len(args) > 1 else MISSING
    const, with_stats = _flag(args, 2, True), _flag(args, 3, False)
    y, x = _design(args[0], known_x)
    return _linest_table(_least_squares(y, x, const), with_stats)


def _trend(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> Any:
    known_x = args[1] if len(args) > 1 else MISSING
    y, x = _design(args[0], known_x)
    fit = _least_squares(y, x, _flag(args, 3, True))
    k = fit.coef.size
    if len(args) < 3 or args[2] is MISSING:
        if known_x is MISSING:
            new = x.reshape(_as_2d(args[0]).shape) if k == 1 else x
        else:
            new = _numeric_block(known_x)
    else:
        new = _numeric_block(args[2])
    if k == 1:
        return (fit.intercept + fit.coef[0] * new).astype(object)
    if new.shape[1] == k:
        return (fit.intercept + new @ fit.coef).reshape(-1, 1).astype(object)
    if new.shape[0] == k:
        return (fit.intercept + fit.coef @ new).reshape(1, -1).astype(object)
    raise Fault(_REF)


def _pairwise(compute: Callable[[_Moments], float]) -> RangedFn:
    return lambda ev, args, ctx: compute(_Moments.of(args[0], args[1]))


RANGED: dict[str, tuple[RangedFn, int, int]] = {
    "SLOPE": (_pairwise(lambda m: m.slope), 2, 2),
    "INTERCEPT": (_intercept, 2, 2),
    "STEYX": (_steyx, 2, 2),
    "RSQ": (_rsq, 2, 2),
    "CORREL": (_correl, 2, 2),
    "PEARSON": (_correl, 2, 2),
    "FORECAST": (_forecast, 3, 3),
    "FORECAST.LINEAR": (_forecast, 3, 3),
    "LINEST": (_linest, 1, 4),
    "TREND": (_trend, 1, 4),
}
