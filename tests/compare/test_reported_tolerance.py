"""Stored values built on the residual sum of squares are judged with a tolerance that widens as
the fit nears perfection, because a spreadsheet's one-pass STEYX cancels digits there.

Outside fact behind the rule: LibreOffice's STEYX was measured 1.5e-9 relative off an exact fit at
1 − R² ≈ 1e-7 (fixtures/README.md); the cancellation error of SSE = SST − SSR is about
eps / (1 − R²) (common practice in numerical analysis). The expected verdicts below are derived by
hand from the rule, not from the code.
"""

from __future__ import annotations

from auditor.compare.reported import relative_tolerance

BASE = 1e-9


def test_nearly_perfect_fit_widens_residual_tolerance() -> None:
    # 50 · 2.22e-16 / 1e-7 = 1.11e-7 relative: a 1.5e-9 engine error passes.
    allowed = relative_tolerance("residual_sd", BASE, {"r_squared": 1 - 1e-7, "df": 6})
    assert 1.0e-7 < allowed < 1.2e-7
    assert allowed > 1.5e-9


def test_ordinary_fit_keeps_the_base_tolerance() -> None:
    # 50 · 2.22e-16 / 0.1 = 1.1e-13 < 1e-9: the base wins.
    assert relative_tolerance("residual_sd", BASE, {"r_squared": 0.9, "df": 6}) == BASE


def test_coefficients_are_not_widened() -> None:
    # The slope does not depend on SSE: no cancellation to allow for.
    assert relative_tolerance("slope", BASE, {"r_squared": 1 - 1e-9, "df": 6}) == BASE


def test_p_value_scales_with_degrees_of_freedom() -> None:
    # (df + 1) = 7 times the residual allowance: 7 · 1.11e-7.
    allowed = relative_tolerance("p_slope@E9", BASE, {"r_squared": 1 - 1e-7, "df": 6})
    assert 7.7e-7 < allowed < 7.8e-7
