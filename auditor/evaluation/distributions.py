"""Student t, normal and F distribution functions, in both the old and the new spellings.

Tails come from auditor.fit.distributions (scipy.special, the numbers of scipy.stats); the rare
densities import scipy.stats when a formula asks for one.
"""

from __future__ import annotations

from typing import Any

from auditor.evaluation.coerce import _int, _non_negative, _num, _truthy
from auditor.evaluation.values import _NUM, Fault, ScalarFn
from auditor.fit.distributions import (
    f_cdf,
    f_isf,
    f_sf,
    norm_cdf,
    norm_ppf,
    t_cdf,
    t_isf,
    t_ppf,
    t_sf,
)


def _df(value: Any) -> int:
    """Degrees of freedom as the spreadsheet takes them: truncated, at least 1."""
    df = _int(value)
    if df < 1:
        raise Fault(_NUM)
    return df


def _probability(value: Any, *, upper_closed: bool) -> float:
    p = _num(value)
    if p <= 0 or p > 1 or (p == 1 and not upper_closed):
        raise Fault(_NUM)
    return p


def _tdist(x: Any, df: Any, tails: Any) -> float:
    x_value, df_value, tail_count = _non_negative(x), _df(df), _int(tails)
    if tail_count not in (1, 2):
        raise Fault(_NUM)
    return tail_count * float(t_sf(x_value, df_value))


def _t_dist(x: Any, df: Any, cumulative: Any) -> float:
    value, degrees, cumulative_flag = _num(x), _df(df), _truthy(cumulative)
    if cumulative_flag:
        return float(t_cdf(value, degrees))  # the left tail
    from scipy import stats

    return float(stats.t.pdf(value, degrees))


def _t_inv_two_tailed(p: Any, df: Any) -> float:
    """TINV and T.INV.2T take the two-tailed probability: the t with P(|T| > t) = p."""
    return float(t_isf(_probability(p, upper_closed=True) / 2, _df(df)))


def _f_args(x: Any, df1: Any, df2: Any) -> tuple[float, int, int]:
    return _non_negative(x), _df(df1), _df(df2)


def _f_dist(x: Any, df1: Any, df2: Any, cumulative: Any) -> float:
    value, d1, d2 = _f_args(x, df1, df2)
    if _truthy(cumulative):
        return float(f_cdf(value, d1, d2))
    from scipy import stats

    return float(stats.f.pdf(value, d1, d2))


def _f_inv_rt(p: Any, df1: Any, df2: Any) -> float:
    return float(f_isf(_probability(p, upper_closed=True), _df(df1), _df(df2)))


def _norm_pdf(z: float) -> float:
    from scipy import stats

    return float(stats.norm.pdf(z))


SCALAR: dict[str, tuple[ScalarFn, int, int]] = {
    "T.DIST": (_t_dist, 3, 3),
    "T.DIST.2T": (lambda x, df: 2 * t_sf(_non_negative(x), _df(df)), 2, 2),
    "T.DIST.RT": (lambda x, df: t_sf(_num(x), _df(df)), 2, 2),
    "TDIST": (_tdist, 3, 3),
    "T.INV": (lambda p, df: t_ppf(_probability(p, upper_closed=False), _df(df)), 2, 2),
    "T.INV.2T": (_t_inv_two_tailed, 2, 2),
    "TINV": (_t_inv_two_tailed, 2, 2),
    "NORM.S.DIST": (
        lambda z, cum: norm_cdf(_num(z)) if _truthy(cum) else _norm_pdf(_num(z)),
        2,
        2,
    ),
    "NORMSDIST": (lambda z: norm_cdf(_num(z)), 1, 1),
    "NORM.S.INV": (lambda p: norm_ppf(_probability(p, upper_closed=False)), 1, 1),
    "NORMSINV": (lambda p: norm_ppf(_probability(p, upper_closed=False)), 1, 1),
    "F.DIST": (_f_dist, 4, 4),
    "F.DIST.RT": (lambda x, a, b: f_sf(*_f_args(x, a, b)), 3, 3),
    "FDIST": (lambda x, a, b: f_sf(*_f_args(x, a, b)), 3, 3),
    "F.INV.RT": (_f_inv_rt, 3, 3),
    "FINV": (_f_inv_rt, 3, 3),
}
