"""leave_one_out's whole-array path (no point of leverage 1) gives, bit for bit, what the
selection path gives: the closed form computed only at the points that can be left out, and
NaN elsewhere (the form statsmodels' refits confirm in test_design_dropone.py). The reference
below is that selection written out plainly, applied to generated fits of every kind: plain
scatter, exact lines, a point alone at its x (leverage 1), a point whose removal leaves x
constant, through the origin, and few points."""

from __future__ import annotations

import numpy as np
import pytest

from auditor.design import dropone
from auditor.design.dropone import LEVERAGE_ONE, leave_one_out
from auditor.fit.distributions import t_sf
from auditor.fit.ols import FitResult, fit_ols


def selected(x: np.ndarray, fit: FitResult) -> tuple[np.ndarray, ...]:
    """The closed form at the points of leverage below 1, by boolean selection."""
    n = x.size
    e, h = fit.residuals, fit.leverage
    centred = x - fit.x_mean if fit.intercept else x
    slope, se, t, p = (np.full(n, np.nan) for _ in range(4))
    df = fit.df - 1
    keep = h < 1.0 - LEVERAGE_ONE
    if df < 1 or not np.any(keep):
        return slope, se, t, p
    one_minus_h = 1.0 - h[keep]
    slope[keep] = float(fit.slopes[0]) - centred[keep] * e[keep] / (fit.sxx * one_minus_h)
    sse = np.maximum(fit.ss_residual - e[keep] ** 2 / one_minus_h, 0.0)
    sxx = fit.sxx - centred[keep] ** 2 * (n / (n - 1) if fit.intercept else 1.0)
    positive = sxx > 1e-12 * fit.sxx
    se_keep = np.full(sse.shape, np.nan)
    se_keep[positive] = np.sqrt(sse[positive] / df / sxx[positive])
    se[keep] = se_keep
    with np.errstate(divide="ignore", invalid="ignore"):
        t_keep = np.where(se_keep > 0.0, slope[keep] / se_keep, np.nan)
    t[keep] = t_keep
    p_keep = np.where(np.isfinite(t_keep), 2.0 * t_sf(np.abs(t_keep), df), np.nan)
    p_keep[(se_keep == 0.0) & (slope[keep] != 0.0)] = 0.0
    p[keep] = p_keep
    return slope, se, t, p


def _cases(seed: int) -> tuple[np.ndarray, np.ndarray, bool]:
    rng = np.random.default_rng(seed)
    n = int(rng.integers(3, 60))
    x = np.round(rng.uniform(-5, 50, n), int(rng.integers(0, 3))) + rng.choice([0.0, 1e6])
    y = 0.3 * x + rng.normal(0, rng.choice([0.0, 1e-9, 1.0]), n)
    kind = seed % 4
    if kind == 1:  # one point alone at its x, the others at one x: leverage 1
        x[:] = x[0]
        x[-1] = x[0] + 3.0
    elif kind == 2 and n > 3:  # two x values, one of them once: leaving it out leaves x constant
        x[:-1] = x[0]
        x[-1] = x[0] + 1.0
        x[-2] = x[0] + 1.0
    return x, y, bool(seed % 5)


def _assert_leave_one_out_is_the_selection(seed: int) -> None:
    x, y, intercept = _cases(seed)
    fit = fit_ols(x, y, intercept=intercept)
    if fit.status != "ok" and len(fit.residuals) != x.size:
        return
    got, want = leave_one_out(x, fit), selected(x, fit)
    for a, b in zip(got, want, strict=True):
        assert a.tobytes() == b.tobytes()


@pytest.mark.parametrize("seed", range(60))
def test_whole_array_path_is_the_selection(seed: int) -> None:
    _assert_leave_one_out_is_the_selection(seed)


def test_a_point_of_leverage_one_is_never_left_out() -> None:
    x = np.array([1.0, 1.0, 1.0, 1.0, 4.0])
    y = np.array([2.0, 2.5, 1.5, 2.2, 6.0])
    fit = fit_ols(x, y)
    slope, se, t, p = leave_one_out(x, fit)
    assert np.isnan(slope[-1]) and np.isnan(p[-1])
    assert np.isfinite(slope[:-1]).all()  # each of the others leaves x = 1 and x = 4


@pytest.mark.parametrize("chunk", [1, 2, 7, 1 << 16])
@pytest.mark.parametrize("seed", range(0, 60, 3))
def test_pieces_of_any_size_give_the_selection(
    seed: int, chunk: int, monkeypatch: pytest.MonkeyPatch
) -> None:
    """leave_one_out works piece by piece (a million rows without arrays of a million
    temporaries); pieces of any size, a point of leverage 1 in some and not others, give the
    plain selection bit for bit."""
    monkeypatch.setattr(dropone, "CHUNK", chunk)
    _assert_leave_one_out_is_the_selection(seed)


@pytest.mark.parametrize("seed", range(0, 60, 2))
def test_slopes_and_p_alone_are_leave_one_out_s(seed: int, monkeypatch: pytest.MonkeyPatch) -> None:
    """What the design metrics keep (slope and p without each point) is leave_one_out's slope and
    p, bit for bit, in pieces or whole."""
    monkeypatch.setattr(dropone, "CHUNK", 1 + seed % 9)
    x, y, intercept = _cases(seed)
    fit = fit_ols(x, y, intercept=intercept)
    if fit.status != "ok" and len(fit.residuals) != x.size:
        return
    slope, _, _, p = selected(x, fit)
    got_slope, got_p = dropone.slopes_and_p_without(x, fit)
    assert got_slope.tobytes() == slope.tobytes()
    assert got_p.tobytes() == p.tobytes()
