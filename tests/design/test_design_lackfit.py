"""Lack-of-fit F test (auditor.design.lackfit) against statsmodels' ANOVA of nested models.

Source: statsmodels ``anova_lm(line, level_means)``, the F test of the straight line against the
one-way model with one mean per x level (the full model), which is the lack-of-fit test.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

from auditor.design.lackfit import lack_of_fit
from auditor.fit.ols import fit_ols


def statsmodels_lack_of_fit(x: np.ndarray, y: np.ndarray) -> tuple[float, float, int, int]:
    frame = pd.DataFrame({"x": x, "y": y})
    line = smf.ols("y ~ x", data=frame).fit()
    means = smf.ols("y ~ C(x)", data=frame).fit()
    table = anova_lm(line, means)
    return (
        float(table["F"].iloc[1]),
        float(table["Pr(>F)"].iloc[1]),
        int(table["df_diff"].iloc[1]),
        int(table["df_resid"].iloc[1]),
    )


CASES = {
    # Invented data sets with replicates: curved in triplicate, straight in duplicate, uneven
    # replication with one single level.
    "curved": (
        np.repeat([1.0, 2.0, 3.0, 4.0, 5.0], 3),
        np.array([0.31, 0.30, 0.32, 0.55, 0.57, 0.56, 0.75, 0.74, 0.77, 0.88, 0.90, 0.89, 0.97,
                  0.99, 0.98]),
    ),
    "straight": (
        np.repeat([0.5, 1.0, 2.0, 3.0, 4.0, 5.0], 2),
        np.array([0.11, 0.115, 0.216, 0.222, 0.43, 0.425, 0.641, 0.637, 0.85, 0.853, 1.066,
                  1.058]),
    ),
    "uneven": (
        np.array([2.0, 2.0, 2.0, 4.0, 6.0, 6.0, 8.0, 8.0, 8.0, 8.0]),
        np.array([5.1, 4.8, 5.3, 9.2, 12.7, 13.4, 15.2, 16.1, 15.7, 15.4]),
    ),
}  # fmt: skip


@pytest.mark.parametrize("name", sorted(CASES))
def test_lack_of_fit_matches_statsmodels_anova(name: str) -> None:
    x, y = CASES[name]
    fit = fit_ols(x, y)
    ours = lack_of_fit(x, y, fit.ss_residual)
    assert ours is not None
    f, p, df_lof, df_pe = statsmodels_lack_of_fit(x, y)
    assert ours.f == pytest.approx(f, rel=1e-9)
    assert ours.p == pytest.approx(p, rel=1e-7)
    assert (ours.df_lack_of_fit, ours.df_pure_error) == (df_lof, df_pe)


def test_the_curved_set_lacks_fit_and_the_straight_one_does_not() -> None:
    # Same source (statsmodels p-values): the test separates the two invented sets.
    assert statsmodels_lack_of_fit(*CASES["curved"])[1] < 0.001
    assert statsmodels_lack_of_fit(*CASES["straight"])[1] > 0.05


def test_no_test_without_replicates_or_with_two_levels() -> None:
    # Common practice: pure error needs replicates, lack of fit needs more levels than
    # parameters.
    x = np.array([1.0, 2.0, 3.0, 4.0])
    y = np.array([1.0, 2.1, 2.9, 4.2])
    assert lack_of_fit(x, y, fit_ols(x, y).ss_residual) is None
    x2 = np.array([1.0, 1.0, 5.0, 5.0])
    y2 = np.array([1.0, 1.2, 4.9, 5.1])
    assert lack_of_fit(x2, y2, fit_ols(x2, y2).ss_residual) is None
