"""Leave-one-out slope and p-value in closed form (auditor.design.dropone) against statsmodels
refits.

Source: statsmodels OLS refitted without each observation in turn (brute force), and the
Anscombe (1973) set 4, whose x = 19 point has leverage 1 (hand-derived: Sxx = 110, h = 1/11 +
100/110 = 1).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm

from auditor.design.dropone import drop_one, leave_one_out
from auditor.fit.ols import fit_ols

REFERENCE = Path(__file__).parents[1] / "reference"


def refits(x: np.ndarray, y: np.ndarray, intercept: bool) -> tuple[np.ndarray, np.ndarray]:
    slopes, p_values = [], []
    for i in range(x.size):
        keep = np.arange(x.size) != i
        design = sm.add_constant(x[keep]) if intercept else x[keep].reshape(-1, 1)
        result = sm.OLS(y[keep], design).fit()
        slopes.append(result.params[-1] if intercept else result.params[0])
        p_values.append(result.pvalues[-1] if intercept else result.pvalues[0])
    return np.array(slopes), np.array(p_values)


X = np.array([2.0, 3.0, 3.5, 5.0, 6.0, 7.5, 8.0, 9.5, 11.0, 14.0])
Y = np.array([3.1, 3.9, 4.8, 5.2, 6.9, 7.1, 8.8, 9.0, 10.9, 12.2])


@pytest.mark.parametrize("intercept", [True, False])
def test_closed_form_matches_refits(intercept: bool) -> None:
    fit = fit_ols(X, Y, intercept=intercept)
    slope, _, _, p = leave_one_out(X, fit)
    expected_slope, expected_p = refits(X, Y, intercept)
    np.testing.assert_allclose(slope, expected_slope, rtol=1e-10)
    np.testing.assert_allclose(p, expected_p, rtol=1e-8)


def test_crossing_row_is_the_one_statsmodels_finds() -> None:
    # A borderline invented set: significant with all rows, not without its last row.
    x = np.array([1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0])
    y = np.array([2.0, 2.9, 2.1, 3.4, 2.6, 3.1, 3.0, 4.3])
    fit = fit_ols(x, y)
    rows = list(range(4, 12))
    result = drop_one(x, y, fit, rows, 0.05)
    _, expected_p = refits(x, y, True)
    assert sm.OLS(y, sm.add_constant(x)).fit().pvalues[1] < 0.05
    crossing = [rows[i] for i in range(x.size) if expected_p[i] >= 0.05]
    assert crossing, "the invented set must have a row that crosses"
    assert result is not None and result.crossing_rows == len(crossing)
    assert result.crossing_row in crossing
    assert result.crossing_p == pytest.approx(max(expected_p), rel=1e-8)


def test_anscombe_four_point_cannot_be_left_out() -> None:
    with open(REFERENCE / "anscombe_quartet.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    x = np.array([float(r["x4"]) for r in rows])
    y = np.array([float(r["y4"]) for r in rows])
    fit = fit_ols(x, y)
    result = drop_one(x, y, fit, list(range(2, 13)), 0.05)
    assert result is not None
    # Anscombe (1973) set 4, row 8 of the table (sheet row 9 here) holds x = 19.
    assert result.undefined_row == 2 + int(np.argmax(x))
    slope, _, _, p = leave_one_out(x, fit)
    assert np.isnan(slope[np.argmax(x)]) and np.isnan(p[np.argmax(x)])
