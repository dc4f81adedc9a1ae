"""Student t, noncentral t, F and normal tails straight from ``scipy.special``.

``scipy.stats`` costs about half a second to import and wraps every call in generic argument
checks; the audit needs a handful of tails, many times over. Each function here calls the same
special function that ``scipy.stats`` calls for that distribution (scipy 1.10 to 1.17:
``t.sf`` is ``stdtr(df, -x)``, ``t.ppf`` is ``stdtrit``, ``nct.sf`` is the Boost ``_nct_sf``,
``nct.cdf`` is ``nctdtr``, ``f.sf`` is ``fdtrc``, ``norm.cdf`` is ``ndtr``), with the same
handling of the boundaries (a probability of 0 or 1, an infinite x, df ≤ 0), so the numbers are
bit for bit those of ``scipy.stats``; tests/test_fit_distributions.py compares them on grids.
Scalars give a numpy float64, as ``scipy.stats`` does; arrays give arrays.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import special

_NAN = np.float64(np.nan)


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
    return _finish(special.stdtr(df, -np.asarray(x, dtype=np.float64)), _bad_df(df))


def t_cdf(x: Any, df: Any) -> Any:
    """P(T ≤ x) (``scipy.stats.t.cdf``)."""
    return _finish(special.stdtr(df, np.asarray(x, dtype=np.float64)), _bad_df(df))


def t_ppf(q: Any, df: Any) -> Any:
    """The x with P(T ≤ x) = q (``scipy.stats.t.ppf``): −inf at 0, inf at 1, nan outside."""
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


def nct_sf(x: float, df: float, noncentrality: float) -> Any:
    """P(T > x) for the noncentral t (``scipy.stats.nct.sf``), clipped to [0, 1] as it is."""
    with np.errstate(over="ignore"):
        value = np.clip(special._ufuncs._nct_sf(x, df, noncentrality), 0, 1)
    return _finish(value, _bad_df(df) | np.isnan(noncentrality))


def nct_cdf(x: float, df: float, noncentrality: float) -> Any:
    """P(T ≤ x) for the noncentral t (``scipy.stats.nct.cdf``)."""
    return _finish(special.nctdtr(df, noncentrality, x), _bad_df(df) | np.isnan(noncentrality))


def f_sf(x: Any, dfn: Any, dfd: Any) -> Any:
    """P(F > x) (``scipy.stats.f.sf``): 1 at x ≤ 0."""
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
