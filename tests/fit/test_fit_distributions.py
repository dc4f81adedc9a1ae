"""The tails of auditor.fit.distributions are bit for bit those of scipy.stats (the reference)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from scipy import stats

from auditor.fit import distributions as fd

XS = [-np.inf, -40.0, -3.2, -1.0, -1e-9, 0.0, 1e-9, 0.5, 1.96, 2.7, 12.0, 400.0, np.inf, np.nan]
DFS = [-1.0, 0.0, 0.5, 1.0, 2.0, 3.0, 7.0, 28.0, 199_998.0, np.nan]
QS = [-0.1, 0.0, 1e-300, 1e-12, 0.001, 0.025, 0.05, 0.5, 0.95, 0.975, 1.0 - 1e-12, 1.0, 1.5, np.nan]
DELTAS = [0.0, 0.3, 1.0, 2.8, 7.5, 40.0]


def same(ours: object, reference: object) -> bool:
    return bool(np.array_equal(np.asarray(ours), np.asarray(reference), equal_nan=True))


@pytest.mark.parametrize("df", DFS)
def test_student_t_tails_equal_scipy_stats(df: float) -> None:
    for x in XS:
        assert same(fd.t_sf(x, df), stats.t.sf(x, df)), (x, df)
        assert same(fd.t_cdf(x, df), stats.t.cdf(x, df)), (x, df)
    for q in QS:
        assert same(fd.t_ppf(q, df), stats.t.ppf(q, df)), (q, df)
        assert same(fd.t_isf(q, df), stats.t.isf(q, df)), (q, df)
        assert same(fd.t_pdf(x, df), stats.t.pdf(x, df)), (x, df)
    assert same(fd.t_pdf(1.3, np.inf), stats.t.pdf(1.3, np.inf))
    # arrays go through whole, as the drop-one table and the df search pass them
    assert same(fd.t_sf(np.array(XS), df), stats.t.sf(np.array(XS), df))
    assert same(fd.t_sf(2.1, np.array(DFS)), stats.t.sf(2.1, np.array(DFS)))


def test_the_types_match_scipy_stats() -> None:
    assert type(fd.t_sf(2.0, 5)) is type(stats.t.sf(2.0, 5)) is np.float64
    assert type(fd.f_sf(2.0, 1, 5)) is type(stats.f.sf(2.0, 1, 5))
    assert type(fd.norm_cdf(0.3)) is type(stats.norm.cdf(0.3))


@pytest.mark.parametrize("df", [1.0, 2.0, 4.0, 9.0, 30.0, 500.0])
def test_noncentral_t_equals_scipy_stats(df: float) -> None:
    for x, delta in itertools.product([-6.0, -2.3, 0.0, 1.5, 2.57, 9.0], DELTAS):
        assert same(fd.nct_sf(x, df, delta), stats.nct.sf(x, df, delta)), (x, df, delta)
        assert same(fd.nct_cdf(x, df, delta), stats.nct.cdf(x, df, delta)), (x, df, delta)


@pytest.mark.parametrize(("dfn", "dfd"), [(1, 1), (1, 8), (3, 17), (12, 2), (0, 5), (2, -1)])
def test_f_tails_equal_scipy_stats(dfn: float, dfd: float) -> None:
    for x in [-1.0, 0.0, 1e-8, 0.4, 1.0, 4.2, 90.0, np.inf, np.nan]:
        assert same(fd.f_sf(x, dfn, dfd), stats.f.sf(x, dfn, dfd)), (x, dfn, dfd)
        assert same(fd.f_cdf(x, dfn, dfd), stats.f.cdf(x, dfn, dfd)), (x, dfn, dfd)
    for q in QS:
        assert same(fd.f_isf(q, dfn, dfd), stats.f.isf(q, dfn, dfd)), (q, dfn, dfd)


def test_normal_tails_equal_scipy_stats() -> None:
    for x in XS:
        assert same(fd.norm_sf(x), stats.norm.sf(x)), x
        assert same(fd.norm_cdf(x), stats.norm.cdf(x)), x
    for q in QS:
        assert same(fd.norm_ppf(q), stats.norm.ppf(q)), q


def test_a_known_value_from_a_printed_table() -> None:
    # t(0.975, 10) = 2.228 in every printed table of Student's t (common practice).
    assert round(float(fd.t_ppf(0.975, 10)), 3) == 2.228


INT_DFS = [-1, 0, 1, 2, 7, 28, 199_998]


def _both(ours: object, general: object) -> bool:
    """Equal bit for bit (nan with nan), and both a numpy float64 as scipy.stats gives."""
    return type(ours) is np.float64 and same(ours, general)


@pytest.mark.parametrize("df", DFS + INT_DFS)
def test_plain_numbers_give_what_arrays_give(df: float) -> None:
    """Python ints and floats and numpy float64 take the short path; a 0-d array the general
    one; scipy.stats is the reference for both."""
    for x in XS:
        for plain in (x, np.float64(x)) + ((int(x),) if np.isfinite(x) else ()):
            assert _both(fd.t_sf(plain, df), fd.t_sf(np.asarray(plain), df)), (plain, df)
            assert _both(fd.t_cdf(plain, df), fd.t_cdf(np.asarray(plain), df)), (plain, df)
            assert same(fd.t_sf(plain, df), stats.t.sf(plain, df)), (plain, df)
    for q in QS:
        for plain in (q, np.float64(q)):
            assert _both(fd.t_ppf(plain, df), fd.t_ppf(np.asarray(q), df)), (plain, df)
            assert same(fd.t_ppf(plain, df), stats.t.ppf(q, df)), (plain, df)
    for x, delta in itertools.product([-6.0, -2.3, 0.0, 1.5, 2.57, 9.0], DELTAS + [np.nan]):
        general = fd.nct_sf(np.asarray(x), df, delta)
        assert _both(fd.nct_sf(x, df, delta), general), (x, df, delta)
        assert _both(fd.nct_cdf(x, df, delta), fd.nct_cdf(np.asarray(x), df, delta))
        assert same(fd.nct_sf(x, df, delta), stats.nct.sf(x, df, delta)), (x, df, delta)
    for x in [-1.0, 0.0, 1e-8, 0.4, 1.0, 4.2, 90.0, np.inf, np.nan]:
        for dfn in (1, 3, 0, 2.5):
            general = fd.f_sf(np.asarray(x), dfn, df)
            assert _both(fd.f_sf(x, dfn, df), general), (x, dfn, df)
            assert same(fd.f_sf(x, dfn, df), stats.f.sf(x, dfn, df)), (x, dfn, df)
