"""Student t, noncentral t, F and normal tails straight from ``scipy.special``.

``scipy.stats`` costs about half a second to import and wraps every call in generic argument
checks; the audit needs a handful of tails, many times over. Each function here calls the same
special function that ``scipy.stats`` calls for that distribution (scipy 1.10 to 1.17:
``t.sf`` is ``stdtr(df, -x)``, ``t.ppf`` is ``stdtrit``, ``nct.sf`` is the Boost ``_nct_sf``,
``nct.cdf`` is ``nctdtr``, ``f.sf`` is ``fdtrc``, ``norm.cdf`` is ``ndtr``), with the same
handling of the boundaries (a probability of 0 or 1, an infinite x, df ≤ 0), so the numbers are
bit for bit those of ``scipy.stats``; tests/test_fit_distributions.py compares them on grids.
Scalars give a numpy float64, as ``scipy.stats`` does; arrays give arrays. Plain numbers (a
Python int or float, a numpy float64) take a short path that calls the same special function
on them and tests the same boundaries in plain comparisons: the audit asks for a few thousand
single tails, and the array handling costs several times the tail itself.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from scipy import special

_NAN = np.float64(np.nan)
_INF = np.float64(np.inf)
_PLAIN = frozenset({float, int, np.float64})  # exact types: no bool, no array


def _plain(*values: Any) -> bool:
    """Whether every argument is a plain number (the short path applies)."""
    return all(type(value) in _PLAIN for value in values)


def _bad_df(*dfs: Any) -> Any:
    """True where a degrees-of-freedom argument is not > 0 (nan included), as the argcheck."""
    bad: Any = False
    for df in dfs:
        bad = bad | ~(np.asarray(df, dtype=np.float64) > 0)
    return bad


def _finish(value: Any, bad: Any) -> Any:
    result = np.where(bad, np.nan, value)
    return result[()] if result.ndim == 0 else result


def t_sf(x: Any, df: Any) -> Any:
    """P(T > x) for Student's t with ``df`` degrees of freedom (``scipy.stats.t.sf``)."""
    if type(df) in _PLAIN and df > 0:  # one valid df: nothing to mask (array x included)
        return special.stdtr(df, -(float(x) if type(x) in _PLAIN else np.asarray(x, np.float64)))
    if _plain(x, df):
        return _NAN
    return _finish(special.stdtr(df, -np.asarray(x, dtype=np.float64)), _bad_df(df))


def t_cdf(x: Any, df: Any) -> Any:
    """P(T ≤ x) (``scipy.stats.t.cdf``)."""
    if _plain(x, df):
        return special.stdtr(df, float(x)) if df > 0 else _NAN
    return _finish(special.stdtr(df, np.asarray(x, dtype=np.float64)), _bad_df(df))


def t_ppf(q: Any, df: Any) -> Any:
    """The x with P(T ≤ x) = q (``scipy.stats.t.ppf``): −inf at 0, inf at 1, nan outside."""
    if _plain(q, df):
        q = float(q)
        if not (df > 0 and 0.0 <= q <= 1.0):
            return _NAN
        return _INF if q == 1.0 else -_INF if q == 0.0 else special.stdtrit(df, q)
    q = np.asarray(q, dtype=np.float64)
    value = np.where(q == 1.0, np.inf, np.where(q == 0.0, -np.inf, special.stdtrit(df, q)))
    return _finish(value, _bad_df(df) | ~((q >= 0.0) & (q <= 1.0)))


def t_isf(q: Any, df: Any) -> Any:
    """The x with P(T > x) = q (``scipy.stats.t.isf``)."""
    q = np.asarray(q, dtype=np.float64)
    value = np.where(q == 1.0, -np.inf, np.where(q == 0.0, np.inf, -special.stdtrit(df, q)))
    return _finish(value, _bad_df(df) | ~((q >= 0.0) & (q <= 1.0)))


def t_pdf(x: Any, df: Any) -> Any:
    """The density of Student's t (``scipy.stats.t.pdf``): its log-density formula, the normal's
    density at infinite df, 0 at an infinite x."""
    if _plain(x, df) and math.isfinite(x) and 0 < df < math.inf:
        return _student_density(float(x), float(df))
    x = np.asarray(x, dtype=np.float64)
    df = np.asarray(df, dtype=np.float64)
    inside = np.isfinite(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        normal = np.exp(-(x**2) / 2.0) / np.sqrt(2 * np.pi)
        student = np.exp(
            np.log(special.poch(0.5 * df, 0.5))
            - 0.5 * (np.log(df) + np.log(np.pi))
            - (df + 1) / 2 * np.log1p(x * x / df)
        )
    value = np.where(inside, np.where(df == np.inf, normal, student), 0.0)
    return _finish(value, _bad_df(df) | np.isnan(x))


def _student_density(x: float, df: float) -> Any:
    """t_pdf of one finite x at one finite df > 0: the same ufuncs on the same doubles as the
    array path (tests/fit/test_distribution_paths.py), without its masks."""
    return np.exp(
        np.log(special.poch(0.5 * df, 0.5))
        - 0.5 * (np.log(df) + np.log(np.pi))
        - (df + 1) / 2 * np.log1p(x * x / df)
    )


def nct_sf(x: float, df: float, noncentrality: float) -> Any:
    """P(T > x) for the noncentral t (``scipy.stats.nct.sf``), clipped to [0, 1] as it is."""
    if _plain(x, df, noncentrality):
        if not (df > 0 and noncentrality == noncentrality):
            return _NAN
        with np.errstate(over="ignore"):
            return np.float64(_clip_unit(float(special._ufuncs._nct_sf(x, df, noncentrality))))
    with np.errstate(over="ignore"):
        value = np.clip(special._ufuncs._nct_sf(x, df, noncentrality), 0, 1)
    return _finish(value, _bad_df(df) | np.isnan(noncentrality))


def nct_tails(critical: float, df: float, noncentrality: float) -> tuple[float, float]:
    """(P(T > c), P(T ≤ −c)) for the noncentral t, as ``nct_sf(c)`` and ``nct_cdf(-c)`` give
    them, for one plain c, df > 0 and a noncentrality that is a number: the power of a
    two-sided test, without the checks each of the two makes (a root search asks for it some
    fifteen times)."""
    if not (_plain(critical, df, noncentrality) and df > 0 and noncentrality == noncentrality):
        upper, lower = nct_sf(critical, df, noncentrality), nct_cdf(-critical, df, noncentrality)
        return float(upper), float(lower)
    with np.errstate(over="ignore"):
        upper = _clip_unit(float(special._ufuncs._nct_sf(critical, df, noncentrality)))
    return upper, float(special.nctdtr(df, noncentrality, -critical))


def _clip_unit(value: float) -> float:
    """``np.clip(value, 0, 1)`` of one number, by comparisons (np.clip of a scalar costs more
    than the tail itself): 0 below 0, 1 above 1, anything else kept (−0 and NaN included, as
    np.clip keeps them)."""
    if value > 1.0:
        return 1.0
    if value < 0.0:
        return 0.0
    return value


def nct_cdf(x: float, df: float, noncentrality: float) -> Any:
    """P(T ≤ x) for the noncentral t (``scipy.stats.nct.cdf``)."""
    value = special.nctdtr(df, noncentrality, x)
    if _plain(x, df, noncentrality):
        return value if df > 0 and noncentrality == noncentrality else _NAN
    return _finish(value, _bad_df(df) | np.isnan(noncentrality))


def f_sf(x: Any, dfn: Any, dfd: Any) -> Any:
    """P(F > x) (``scipy.stats.f.sf``): 1 at x ≤ 0."""
    if _plain(x, dfn, dfd):
        if not (dfn > 0 and dfd > 0) or x != x:
            return _NAN
        return np.float64(1.0) if x <= 0.0 else special.fdtrc(dfn, dfd, float(x))
    x = np.asarray(x, dtype=np.float64)
    value = np.where(x <= 0.0, 1.0, special.fdtrc(dfn, dfd, np.maximum(x, 0.0)))
    return _finish(value, _bad_df(dfn, dfd) | np.isnan(x))


def f_cdf(x: Any, dfn: Any, dfd: Any) -> Any:
    """P(F ≤ x) (``scipy.stats.f.cdf``): 0 at x ≤ 0."""
    x = np.asarray(x, dtype=np.float64)
    value = np.where(x <= 0.0, 0.0, special.fdtr(dfn, dfd, np.maximum(x, 0.0)))
    return _finish(value, _bad_df(dfn, dfd) | np.isnan(x))


def f_isf(q: Any, dfn: Any, dfd: Any) -> Any:
    """The x with P(F > x) = q (``scipy.stats.f.isf``): 0 at q = 1, inf at q = 0."""
    q = np.asarray(q, dtype=np.float64)
    value = np.where(q == 1.0, 0.0, np.where(q == 0.0, np.inf, special.fdtri(dfn, dfd, 1.0 - q)))
    return _finish(value, _bad_df(dfn, dfd) | ~((q >= 0.0) & (q <= 1.0)))


def norm_sf(x: Any) -> Any:
    """P(Z > x) for the standard normal (``scipy.stats.norm.sf``)."""
    return special.ndtr(-np.asarray(x, dtype=np.float64))[()]


def norm_cdf(x: Any) -> Any:
    """P(Z ≤ x) (``scipy.stats.norm.cdf``)."""
    return special.ndtr(np.asarray(x, dtype=np.float64))[()]


def norm_ppf(q: Any) -> Any:
    """The z with P(Z ≤ z) = q (``scipy.stats.norm.ppf``)."""
    q = np.asarray(q, dtype=np.float64)
    return _finish(special.ndtri(q), ~((q >= 0.0) & (q <= 1.0)))
