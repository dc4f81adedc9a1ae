"""Power of the slope's t test and the designs that reach a target (auditor.design.power).

Outside sources: a seeded Monte Carlo simulation of the whole procedure (fit, t, two-sided test);
statsmodels' TTestPower (the same noncentral t, built independently); standard normal quantiles
(handbook tables); the textbook closed forms of Sxx for evenly spaced and two-end designs.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats as sps
from statsmodels.stats.power import TTestPower

from auditor.design.power import (
    even_levels,
    min_detectable_slope,
    noncentrality_for,
    power_at,
    slope_power,
    smallest_n,
    sxx_even,
    sxx_for_half_width,
    sxx_for_se,
    sxx_of,
    sxx_to_detect,
    sxx_two_end,
    width_for_sxx_even,
)
from auditor.fit.ols import fit_ols

DRAWS = 40_000  # the issue asks for at least 20,000; 40,000 puts 1 pp at about 4 standard errors


def simulated_power(x: np.ndarray, slope: float, sigma: float, alpha: float, seed: int) -> float:
    """Share of seeded simulated data sets whose fitted slope is significant (two-sided t)."""
    rng = np.random.default_rng(seed)
    n = x.size
    centred = x - x.mean()
    sxx = float(centred @ centred)
    y = 3.0 + slope * x + rng.normal(0.0, sigma, size=(DRAWS, n))
    y_centred = y - y.mean(axis=1, keepdims=True)
    b = y_centred @ centred / sxx
    residuals = y_centred - b[:, None] * centred[None, :]
    s2 = np.einsum("ij,ij->i", residuals, residuals) / (n - 2)
    t = b / np.sqrt(s2 / sxx)
    critical = sps.t.ppf(1.0 - alpha / 2.0, n - 2)
    return float(np.mean(np.abs(t) > critical))


# Three design points: small df (where a normal approximation fails), a two-end design near 50 %
# power, and a replicated design near 80 %.
DESIGNS = [
    ("6 even over 0-5, df 4", np.linspace(0.0, 5.0, 6), 0.45, 1.0, 0.05, 11),
    ("10 two-end", np.repeat([10.0, 40.0], 5), 0.021, 0.41, 0.05, 12),
    ("5 levels x 4", np.repeat([1.0, 2.0, 3.0, 4.0, 5.0], 4), 0.52, 0.9, 0.01, 13),
]


@pytest.mark.parametrize(("label", "x", "slope", "sigma", "alpha", "seed"), DESIGNS)
def test_noncentral_t_power_matches_monte_carlo(
    label: str, x: np.ndarray, slope: float, sigma: float, alpha: float, seed: int
) -> None:
    # Source: a seeded Monte Carlo simulation of fitting and testing, 40,000 draws per point.
    computed = slope_power(slope, sigma, sxx_of(x), x.size - 2, alpha)
    simulated = simulated_power(x, slope, sigma, alpha, seed)
    assert 0.2 < simulated < 0.95, label  # a design point where power is informative
    assert abs(computed - simulated) < 0.01, (label, computed, simulated)


def test_normal_approximation_would_fail_the_same_comparison() -> None:
    # The comparison above can fail: at df = 4 the normal approximation misses the simulation by
    # more than 1 percentage point (source: the same seeded simulation).
    _, x, slope, sigma, alpha, seed = DESIGNS[0]
    delta = slope * math.sqrt(sxx_of(x)) / sigma
    z = sps.norm.ppf(1.0 - alpha / 2.0)
    normal = sps.norm.sf(z - delta) + sps.norm.cdf(-z - delta)
    assert abs(normal - simulated_power(x, slope, sigma, alpha, seed)) > 0.02


@pytest.mark.parametrize(
    ("delta", "df", "alpha"), [(0.5, 3, 0.05), (2.8, 8, 0.05), (4.0, 25, 0.01)]
)
def test_power_agrees_with_statsmodels(delta: float, df: int, alpha: float) -> None:
    # Source: statsmodels TTestPower, a one-sample t test with nobs = df + 1 has the same df and
    # noncentrality effect_size·√nobs.
    nobs = df + 1
    expected = TTestPower().power(
        effect_size=delta / math.sqrt(nobs), nobs=nobs, alpha=alpha, alternative="two-sided"
    )
    assert power_at(delta, df, alpha) == pytest.approx(expected, abs=1e-9)


def test_power_at_zero_effect_is_alpha() -> None:
    # Common practice: with no true slope the test rejects at its nominal level.
    assert power_at(0.0, 7, 0.05) == pytest.approx(0.05, abs=1e-15)


def test_noncentrality_for_80_percent_tends_to_normal_quantiles() -> None:
    # Handbook normal quantiles: z(0.975) + z(0.80) = 1.95996 + 0.84162 = 2.80158.
    assert noncentrality_for(0.80, 1_000_000, 0.05) == pytest.approx(2.80158, abs=2e-4)


def test_min_detectable_slope_is_detected_with_the_target_power() -> None:
    # Cross-checked with statsmodels' solver: the effect size it finds for 80 % power at
    # nobs = 9 (df 8) gives the noncentrality δ*, and MDS = δ*·σ/√Sxx.
    sigma, sxx, df = 0.41, 96.0, 8
    effect = TTestPower().solve_power(nobs=df + 1, alpha=0.05, power=0.8)
    expected = effect * math.sqrt(df + 1) * sigma / math.sqrt(sxx)
    assert min_detectable_slope(sigma, sxx, df, 0.05, 0.8) == pytest.approx(expected, rel=1e-6)
    assert sxx_to_detect(expected, sigma, df, 0.05, 0.8) == pytest.approx(sxx, rel=1e-5)


def test_quadrupling_sxx_halves_the_standard_error() -> None:
    # Common practice (an exact identity): SE(b1) = s/√Sxx. Stretching x about its mean by 2
    # with the same residuals quadruples Sxx and halves SE.
    x = np.array([1.0, 2.0, 3.5, 4.0, 6.0, 7.5])
    y = np.array([2.1, 2.9, 4.2, 4.1, 6.3, 7.2])
    first = fit_ols(x, y)
    stretched = x.mean() + 2.0 * (x - x.mean())
    y2 = y + float(first.slopes[0]) * (stretched - x)
    second = fit_ols(stretched, y2)
    assert second.sxx == pytest.approx(4.0 * first.sxx, rel=1e-13)
    assert second.residual_sd == pytest.approx(first.residual_sd, rel=1e-12)
    assert float(second.se_slopes[0]) == pytest.approx(0.5 * float(first.se_slopes[0]), rel=1e-12)
    target = float(first.se_slopes[0])
    assert sxx_for_se(first.residual_sd, target / 2.0) == pytest.approx(4.0 * first.sxx, rel=1e-12)


@pytest.mark.parametrize("n", [2, 3, 5, 8, 13])
def test_design_sxx_closed_forms(n: int) -> None:
    # Textbook: n evenly spaced points with step h have Sxx = n(n² − 1)h²/12; a two-end design
    # with a and b points at the ends has Sxx = a·b/n·R².
    low, high = 10.0, 40.0
    h = (high - low) / (n - 1)
    assert sxx_even(n, low, high) == pytest.approx(n * (n * n - 1) * h * h / 12.0, rel=1e-12)
    assert sxx_of(even_levels(n, low, high)) == pytest.approx(sxx_even(n, low, high), rel=1e-12)
    a = n // 2
    two_end = np.array([low] * a + [high] * (n - a))
    assert sxx_of(two_end) == pytest.approx(sxx_two_end(n, low, high), rel=1e-12)
    assert width_for_sxx_even(sxx_even(n, low, high), n) == pytest.approx(high - low, rel=1e-12)


def test_half_width_target_uses_the_t_quantile() -> None:
    # Handbook t table: t(0.975, 8) = 2.306.
    assert sxx_for_half_width(1.0, 1.0, 8, 0.95) == pytest.approx(2.306**2, rel=1e-3)


def test_smallest_n_matches_a_linear_scan() -> None:
    # A plain scan over n (the same rule, evaluated one n at a time) finds the same n.
    def need(df: int) -> float:
        return sxx_to_detect(0.02, 0.41, df, 0.05, 0.8)

    def scan() -> int:
        for n in range(3, 500):
            if sxx_even(n, 10.0, 40.0) >= need(n - 2):
                return n
        raise AssertionError("no n found")

    assert smallest_n(lambda n: sxx_even(n, 10.0, 40.0), need) == scan()
    assert smallest_n(lambda n: 1.0, need, n_max=50) is None


def test_bad_arguments_are_refused_in_words() -> None:
    with pytest.raises(ValueError, match="df must be at least 1"):
        power_at(1.0, 0, 0.05)
    with pytest.raises(ValueError, match="power must lie strictly between 0 and 1"):
        noncentrality_for(1.0, 5, 0.05)
