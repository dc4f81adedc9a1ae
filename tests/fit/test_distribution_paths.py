"""The short paths of auditor.fit.distributions give, bit for bit, what their array paths give
(which tests/fit/test_fit_distributions.py compares with scipy.stats): t_sf with one plain df
over an array of x, and t_pdf of one plain x and df. Generated grids, including the edges
(x of 0, ±inf and NaN, huge and tiny df, df of 0 and below)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special

from auditor.fit import distributions as d


def _bits(value: object) -> bytes:
    return np.asarray(value, dtype=np.float64).tobytes()


XS = [0.0, -0.0, 1e-300, 0.3, -1.7, 2.5, 12.0, 40.0, -1e5, 1e300, math.inf, -math.inf, math.nan]
DFS = [1, 2, 3, 7, 30, 499, 10_000, 0.5, 2.5, 1e12, np.float64(11.0)]


@pytest.mark.parametrize("df", DFS)
def test_t_sf_over_an_array_is_the_masked_array_path(df: float) -> None:
    x = np.array(XS + list(np.random.default_rng(3).normal(0, 5, 200)))
    masked = d._finish(special.stdtr(df, -x), d._bad_df(df))
    got = d.t_sf(x, df)
    assert isinstance(got, np.ndarray) and got.tobytes() == masked.tobytes()
    zero_d = d.t_sf(np.float64(2.0), df)
    assert _bits(zero_d) == _bits(d._finish(special.stdtr(df, -np.asarray(2.0)), False))


@pytest.mark.parametrize("df", [0, -1, math.nan, 0.0])
def test_t_sf_with_a_bad_df_is_nan(df: float) -> None:
    assert math.isnan(d.t_sf(1.0, df))
    assert np.isnan(d.t_sf(np.array([1.0, 2.0]), df)).all()


def _array_pdf(x: float, df: float) -> object:
    """t_pdf's array path for one x and df (the code the short path must equal)."""
    xa, dfa = np.asarray(x, dtype=np.float64), np.asarray(df, dtype=np.float64)
    with np.errstate(all="ignore"):  # x = 1e300 overflows x² (to inf, as the short path does)
        normal = np.exp(-(xa**2) / 2.0) / np.sqrt(2 * np.pi)
        student = np.exp(
            np.log(special.poch(0.5 * dfa, 0.5))
            - 0.5 * (np.log(dfa) + np.log(np.pi))
            - (dfa + 1) / 2 * np.log1p(xa * xa / dfa)
        )
    value = np.where(np.isfinite(xa), np.where(dfa == np.inf, normal, student), 0.0)
    return d._finish(value, d._bad_df(dfa) | np.isnan(xa))


@pytest.mark.parametrize("df", DFS + [math.inf, 0, -2])
def test_t_pdf_of_one_number_is_the_array_path(df: float) -> None:
    rng = np.random.default_rng(int(df) if math.isfinite(df) and df > 0 else 7)
    for x in XS + rng.normal(0, 8, 300).tolist() + [int(v) for v in range(-5, 6)]:
        with np.errstate(all="ignore"):
            got = d.t_pdf(x, df)
        assert _bits(got) == _bits(_array_pdf(x, df)), (x, df)


def test_the_unit_clip_is_numpys_clip() -> None:
    rng = np.random.default_rng(5)
    grid = [0.0, -0.0, 1.0, -1e-300, 1e-300, 1.0 + 2e-16, 1.0 - 1e-16, math.nan, math.inf]
    grid += [-math.inf, 0.5, 2.0, -3.0] + rng.uniform(-0.5, 1.5, 300).tolist()
    for value in grid:
        assert _bits(d._clip_unit(value)) == _bits(np.clip(np.float64(value), 0, 1)), value


@pytest.mark.parametrize("df", [1, 4, 23, 498, 2.5, 1e6])
def test_nct_sf_of_plain_numbers_is_the_clipped_array_path(df: float) -> None:
    rng = np.random.default_rng(11)
    for x in [0.0, -2.0, 1.96, 40.0, -40.0, math.inf, -math.inf] + rng.normal(0, 4, 60).tolist():
        for delta in [0.0, 0.5, 2.8, 12.0, 60.0]:
            with np.errstate(over="ignore"):
                clipped = np.clip(special._ufuncs._nct_sf(x, df, delta), 0, 1)
            assert _bits(d.nct_sf(x, df, delta)) == _bits(clipped), (x, df, delta)
    assert math.isnan(d.nct_sf(1.0, 0, 1.0)) and math.isnan(d.nct_sf(1.0, 3, math.nan))


@pytest.mark.parametrize("df", [1, 3, 23, 498, 4.5])
def test_nct_tails_are_the_two_tails(df: float) -> None:
    """nct_tails gives what nct_sf(c) and nct_cdf(-c) give, bit for bit (the power's tails)."""
    for critical in [0.0, 1.2, 2.0686576104190406, 12.7, 40.0]:
        for delta in [0.0, 1e-9, 0.7, 2.8, 9.5, 64.0, math.nan]:
            upper, lower = d.nct_tails(critical, df, delta)
            assert _bits(upper) == _bits(d.nct_sf(critical, df, delta)), (critical, df, delta)
            assert _bits(lower) == _bits(d.nct_cdf(-critical, df, delta)), (critical, df, delta)
    assert all(math.isnan(v) for v in d.nct_tails(2.0, 0, 1.0))
