"""The calibration arithmetic against outside truth: statsmodels, a handbook's worked example and
hand calculations with the formula's source named beside each test."""

from __future__ import annotations

import math

import numpy as np
import pytest
import statsmodels.api as sm

from auditor.fit.calibration import (
    back_calculate,
    coefficient_test,
    detection_limits,
    deviation_percent,
    fit_line,
    judge_standards,
    read_off,
    residuals_of,
)
from auditor.fit.calibration_shape import curvature, residual_runs, spread_growth
from auditor.fit.weights import recognise_scheme, scheme_weights, weighting_effect

# Worked example: Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, sections
# 5.6 and 5.7 (fluorescence of standards, pg/mL), from memory: b = 1.93, a = 1.52,
# s(y/x) = 0.4329; y0 = 2.9 -> x0 = 0.72, s(x0) = 0.26; y0 = 13.5 -> 6.21, 0.24;
# y0 = 23.0 -> 11.13, 0.26; LOD = 3·s(y/x)/b = 0.67 pg/mL.
HANDBOOK_X = [0, 2, 4, 6, 8, 10, 12]
HANDBOOK_Y = [2.1, 5.0, 9.0, 12.6, 17.3, 21.0, 24.7]


def test_line_matches_the_handbook_example() -> None:
    line = fit_line(HANDBOOK_X, HANDBOOK_Y)
    assert round(line.slope, 2) == 1.93
    assert round(line.intercept, 2) == 1.52
    assert round(line.residual_sd, 4) == 0.4328  # printed 0.4329 in the book (rounded up)


@pytest.mark.parametrize(
    ("response", "x0", "u"), [(2.9, 0.72, 0.26), (13.5, 6.21, 0.24), (23.0, 11.13, 0.26)]
)
def test_read_off_uncertainty_matches_the_handbook(response: float, x0: float, u: float) -> None:
    line = fit_line(HANDBOOK_X, HANDBOOK_Y)
    found = read_off(response, line, 0, 12, replicates=1)
    assert round(found.concentration, 2) == x0
    assert round(found.standard_uncertainty, 2) == u
    assert found.inside


def test_read_off_dilution_and_range() -> None:
    line = fit_line(HANDBOOK_X, HANDBOOK_Y)
    plain = read_off(13.5, line, 0, 12)
    diluted = read_off(13.5, line, 0, 12, dilution=5)
    assert diluted.concentration == pytest.approx(5 * plain.concentration, rel=1e-12)
    assert diluted.standard_uncertainty == pytest.approx(5 * plain.standard_uncertainty)
    # The top standard exactly at the range end is inside; beyond it is not.
    top = line.intercept + line.slope * 12
    assert read_off(top, line, 0, 12).inside
    assert not read_off(top + 0.5, line, 0, 12).inside
    # Three replicate readings shrink the first term of the formula (1/m).
    assert read_off(13.5, line, 0, 12, replicates=3).standard_uncertainty == pytest.approx(
        line.residual_sd
        / line.slope
        * math.sqrt(1 / 3 + 1 / 7 + (13.5 - line.y_mean) ** 2 / (line.slope**2 * 112.0))
    )


def test_detection_limit_matches_the_handbook() -> None:
    # Miller & Miller (from memory) use 3·s(y/x)/b = 0.67; ICH Q2(R1) uses 3.3σ/S (from memory).
    line = fit_line(HANDBOOK_X, HANDBOOK_Y)
    residual = detection_limits(line)[0]
    assert residual.sigma_name == "residual SD"
    assert round(residual.lod / 3.3 * 3, 2) == 0.67
    assert residual.loq == pytest.approx(10 * line.residual_sd / line.slope)


def test_detection_limits_by_hand() -> None:
    # Hand calculation, ICH Q2(R1) (from memory): DL = 3.3σ/S, QL = 10σ/S.
    # x = 1..5, y = 2.1, 3.9, 6.2, 7.8, 10.0: by hand Sxy = 19.7, Sxx = 10, slope 1.97, intercept
    # 6.0 - 3 * 1.97 = 0.09; residuals 0.04, -0.13, 0.20, -0.17, 0.06 -> SSE = 0.091.
    line = fit_line([1, 2, 3, 4, 5], [2.1, 3.9, 6.2, 7.8, 10.0])
    assert line.slope == pytest.approx(1.97)
    assert line.intercept == pytest.approx(0.09, abs=1e-12)
    s = math.sqrt(0.091 / 3)
    bases = {b.sigma_name: b for b in detection_limits(line, blank_sd=0.05)}
    assert bases["residual SD"].lod == pytest.approx(3.3 * s / 1.97)
    assert bases["residual SD"].loq == pytest.approx(10 * s / 1.97)
    se_b0 = s * math.sqrt(1 / 5 + 9 / 10)
    assert bases["SE of the intercept"].lod == pytest.approx(3.3 * se_b0 / 1.97)
    assert bases["SD of the blanks"].lod == pytest.approx(3.3 * 0.05 / 1.97)


def test_weighted_fit_matches_statsmodels_wls() -> None:
    rng = np.random.default_rng(15)
    x = np.repeat([1.0, 2, 5, 10, 20, 50, 100], 3)
    y = 0.4 + 2.5 * x * (1 + rng.normal(0, 0.04, x.size))
    for scheme in ("1/x", "1/x²", "1/s²"):
        weights = scheme_weights(scheme, x, y)
        assert weights is not None
        ours = fit_line(x, y, weights)
        reference = sm.WLS(y, sm.add_constant(x), weights=weights).fit()  # statsmodels
        assert ours.intercept == pytest.approx(reference.params[0], rel=1e-10)
        assert ours.slope == pytest.approx(reference.params[1], rel=1e-10)
        assert ours.se_intercept == pytest.approx(reference.bse[0], rel=1e-9)
        assert ours.se_slope == pytest.approx(reference.bse[1], rel=1e-9)
        assert ours.residual_sd == pytest.approx(math.sqrt(reference.scale), rel=1e-9)


def test_weighting_effect_and_scheme_recognition() -> None:
    rng = np.random.default_rng(7)
    x = np.repeat([1.0, 2, 5, 10, 20, 50, 100], 3)
    y = 0.4 + 2.5 * x * (1 + rng.normal(0, 0.05, x.size))
    assert recognise_scheme(7 / x**2, x, y) == "1/x²"
    assert recognise_scheme(1 / x, x, y) == "1/x"
    assert recognise_scheme(np.sqrt(1 / x), x, y) is None
    # 1/s²: the inverse variance of each level's replicates, by hand with numpy.
    by_level = {v: 1 / np.var(y[x == v], ddof=1) for v in np.unique(x)}
    assert recognise_scheme(np.array([by_level[v] for v in x]), x, y) == "1/s²"
    effect = weighting_effect(x, y, "1/x²")
    assert effect is not None
    # Growing scatter: the unweighted line misreads the lowest standard far more than 1/x² does.
    assert abs(effect.deviation_weighted) < abs(effect.deviation_unweighted)
    assert effect.sum_abs_weighted < effect.sum_abs_unweighted


def test_back_calculation_and_acceptance() -> None:
    # Acceptance ±15 %, ±20 % at the lowest, 75 % and six standards: EMA 2011 / ICH M10 (from
    # memory). Hand-made deviations: the lowest at -18 % passes (±20 %), one at +16 % fails.
    nominal = [0, 1, 2, 5, 10, 20, 50, 100]
    deviations = [math.nan, -18.0, 5.0, 16.0, -3.0, 2.0, 1.0, -1.0]
    verdict = judge_standards(nominal, deviations, 15, 20, 0.75, 6)
    assert verdict.non_zero == 7 and verdict.passed == 6
    assert verdict.accepted
    assert verdict.passing.tolist() == [False, True, True, False, True, True, True, True]
    worse = judge_standards(nominal, [math.nan, -25, 5, 16, -17, 2, 1, -1], 15, 20, 0.75, 6)
    assert not worse.accepted
    assert worse.reasons == [
        "4 of 7 standards pass, fewer than 75%",
        "4 passing standards, fewer than 6",
    ]
    line = fit_line([1, 2, 3], [3, 5, 7])
    assert back_calculate([5.0], line).tolist() == pytest.approx([2.0])
    assert deviation_percent([2.0], [2.2]).tolist() == pytest.approx([10.0])


def test_spread_growth_tests() -> None:
    # Replicates at both ends: F = s²(top)/s²(bottom), here (by hand) variances 4 and 0.01 -> 400.
    x = [1, 1, 1, 5, 5, 5, 10, 10, 10]
    y = [1.0, 1.1, 1.2, 5, 5.5, 4.5, 8, 10, 12]
    line = fit_line(x, y)
    test = spread_growth(x, y, residuals_of(x, y, line))
    assert test is not None and test.method.startswith("F test")
    assert test.statistic == pytest.approx(400.0)
    assert test.p_value < 0.01
    # No replicates: rank correlation of |residual| with x.
    xs = np.arange(1.0, 11)
    ys = 2 * xs + np.array([0.01, -0.02, 0.05, -0.08, 0.1, -0.2, 0.3, -0.45, 0.6, -0.9])
    rank = spread_growth(xs, ys, residuals_of(xs, ys, fit_line(xs, ys)))
    assert rank is not None and rank.method.startswith("Spearman")
    assert rank.statistic > 0.8 and rank.p_value < 0.01


def test_runs_and_curvature_against_statsmodels() -> None:
    x = np.arange(1.0, 11)
    y = (
        1
        + 2 * x
        - 0.05 * x**2
        + np.array([0.02, -0.01, 0.01, 0, -0.02, 0.01, 0.02, -0.01, 0, 0.01])
    )
    line = fit_line(x, y)
    runs = residual_runs(x, residuals_of(x, y, line))
    assert runs is not None
    assert runs.runs == 3  # − + − by hand: a bow shows as three runs
    assert runs.p_value < 0.05
    bent = curvature(x, y)
    assert bent is not None
    reference = sm.OLS(y, np.column_stack([np.ones_like(x), x, x**2])).fit()  # statsmodels
    assert bent.quadratic == pytest.approx(reference.params[2], rel=1e-8)
    assert bent.se_quadratic == pytest.approx(reference.bse[2], rel=1e-8)
    assert bent.p_value == pytest.approx(reference.pvalues[2], rel=1e-6)
    assert bent.s_quadratic < bent.s_line


def test_coefficient_test_against_statsmodels() -> None:
    rng = np.random.default_rng(3)
    x = np.linspace(1, 20, 12)
    y = 0.3 + 1.04 * x + rng.normal(0, 0.2, x.size)
    line = fit_line(x, y)
    reference = sm.OLS(y, sm.add_constant(x)).fit()  # statsmodels t_test of slope = 1
    slope_one = coefficient_test(line.slope, line.se_slope, line.df, 1.0)
    outside = reference.t_test("x1 = 1")
    assert slope_one.t == pytest.approx(float(np.ravel(outside.tvalue)[0]), rel=1e-9)
    assert slope_one.p_value == pytest.approx(float(np.ravel(outside.pvalue)[0]), rel=1e-7)
    intercept_zero = coefficient_test(line.intercept, line.se_intercept, line.df, 0.0)
    assert intercept_zero.p_value == pytest.approx(reference.pvalues[0], rel=1e-7)


def test_weighted_read_off_uncertainty_against_statsmodels() -> None:
    # statsmodels WLS: var(x0) = [s²/(w0·m) + se_mean(ŷ at x0)²] / b1² (first-order, as the usual
    # formula); se_mean comes from statsmodels' own prediction.
    rng = np.random.default_rng(21)
    x = np.repeat([1.0, 2, 5, 10, 20, 50], 3)
    y = 0.2 + 1.7 * x * (1 + rng.normal(0, 0.05, x.size))
    weights = 1 / x**2
    line = fit_line(x, y, weights)
    reference = sm.WLS(y, sm.add_constant(x), weights=weights).fit()
    for response, m in ((4.1, 1), (30.0, 2), (70.0, 3)):
        x0 = (response - line.intercept) / line.slope
        w0 = 1 / x0**2
        ours = read_off(response, line, 1, 50, replicates=m, sample_weight=w0)
        se_mean = float(reference.get_prediction(np.array([[1.0, x0]])).se_mean[0])
        expected = math.sqrt(reference.scale / (w0 * m) + se_mean**2) / reference.params[1]
        assert ours.concentration == pytest.approx(x0)
        assert ours.standard_uncertainty == pytest.approx(expected, rel=1e-9)


def test_a_flat_line_reads_no_concentration() -> None:
    line = fit_line([1, 2, 3, 4], [5.0, 5.1, 4.9, 5.0])
    flat = type(line)(**{**line.__dict__, "slope": 0.0})
    with pytest.raises(ValueError, match="slope 0"):
        read_off(5.0, flat, 1, 4)
