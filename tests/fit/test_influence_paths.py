"""_influence's whole-array path (every point of leverage below 1) gives, bit for bit, what the
selection path gives (the common-practice formulas at the points that can be scaled, 0 at a
point of leverage 1), on generated fits: scatter, exact lines, a point alone at its x, through
the origin, few points."""

from __future__ import annotations

import numpy as np
import pytest

from auditor.fit.inference import _influence
from auditor.fit.ols import fit_ols


def _selected(residuals, leverage, residual_sd, p):  # type: ignore[no-untyped-def]
    studentized = np.zeros(residuals.shape)
    cooks = np.zeros(residuals.shape)
    inside = (leverage < 1.0 - 1e-12) & (residual_sd > 0.0)
    one_minus_h = 1.0 - leverage[inside]
    studentized[inside] = residuals[inside] / (residual_sd * np.sqrt(one_minus_h))
    cooks[inside] = studentized[inside] ** 2 * leverage[inside] / (p * one_minus_h)
    return studentized, cooks


@pytest.mark.parametrize("seed", range(40))
def test_whole_array_influence_is_the_selection(seed: int) -> None:
    rng = np.random.default_rng(seed)
    n = int(rng.integers(3, 80))
    x = rng.uniform(0, 30, n).round(int(rng.integers(0, 3)))
    if seed % 4 == 1:  # a point alone at its x: leverage 1
        x[:-1] = x[0]
        x[-1] = x[0] + 2.0
    y = 1.5 * x + rng.normal(0, rng.choice([0.0, 1e-12, 2.0]), n)
    intercept = bool(seed % 3)
    fit = fit_ols(x, y, intercept=intercept)
    if not len(fit.residuals) or fit.df <= 0:
        return
    p = 2 if intercept else 1
    got = _influence(fit.residuals, fit.leverage, fit.residual_sd, p, fit.df)
    want = _selected(fit.residuals, fit.leverage, fit.residual_sd, p)
    assert got[0].tobytes() == want[0].tobytes() and got[1].tobytes() == want[1].tobytes()
