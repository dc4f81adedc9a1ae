"""The accurate solver on generated data: exact arithmetic, statsmodels and numpy as references.

Outside references: statsmodels ``OLS`` (pseudo-inverse), numpy ``linalg.lstsq`` (SVD), and
exact rational arithmetic on the same doubles (tests/strd_reference.py, ``fractions``). Data
come from hypothesis, derandomised; x lies on a 1/16 grid so that shifts by 1e9 are exact.
"""

from __future__ import annotations

import math

import numpy as np
import statsmodels.api as sm
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from strd_reference import exact_fit

from auditor.fit.exact import solve_exact
from auditor.fit.ols import fit_ols

DETERMINISTIC = settings(max_examples=60, deadline=None, derandomize=True, database=None)
OFFSET = 1e9

grid = st.integers(0, 800).map(lambda i: i / 16)  # 0 .. 50
noise = st.integers(-500, 500).map(lambda i: i / 50)


@st.composite
def series(draw: st.DrawFn, n_min: int = 8, n_max: int = 25) -> tuple[np.ndarray, np.ndarray]:
    n = draw(st.integers(n_min, n_max))
    u = np.array(sorted({draw(grid) for _ in range(n)}))
    assume(u.size >= n_min)
    e = np.array([draw(noise) for _ in range(u.size)])
    return u, 3.0 + 0.5 * u - 0.01 * u * u + e


def close(a: float, b: float, rel: float) -> bool:
    return abs(a - b) <= rel * max(abs(a), abs(b))


@DETERMINISTIC
@given(series())
def test_offset_x_is_solved_to_full_precision(data: tuple[np.ndarray, np.ndarray]) -> None:
    u, y = data
    x = u + OFFSET  # exact: u on a 1/16 grid, far inside 53 bits
    fit = fit_ols(x, y)
    assert fit.conditioning is not None and fit.conditioning.solver == "exact"
    # statsmodels on u: the same regression in exact arithmetic, well conditioned (the slope,
    # its SE, t, residual SD and R² do not depend on where x starts).
    ref = sm.OLS(y, sm.add_constant(u)).fit()
    assert close(float(fit.slopes[0]), float(ref.params[1]), 1e-12)
    assert close(float(fit.se_slopes[0]), float(ref.bse[1]), 1e-12)
    assert close(fit.residual_sd, math.sqrt(float(ref.scale)), 1e-12)
    # The intercept at x = 0 lies 1e9 away from the data: exact arithmetic is the reference.
    exact = exact_fit(x.reshape(-1, 1), y, True)
    assert close(fit.intercept_value, exact["b0"], 1e-14)
    assert close(float(fit.se_intercept or 0.0), exact["se0"], 1e-14)


@DETERMINISTIC
@given(series(n_min=10, n_max=30))
def test_polynomial_columns_match_exact_arithmetic(data: tuple[np.ndarray, np.ndarray]) -> None:
    u, y = data
    x = np.column_stack([u, u**2, u**3])
    exact = exact_fit(x, y, True)
    assume(exact["r_squared"] < 1.0 - 1e-12)  # not an exact fit: the SEs carry digits
    fit = fit_ols(x, y)
    # A coefficient is judged on the scale of its own uncertainty (|b| + SE): a cubic term of
    # 1e-6 ± 1e-3 carries no relative digits of its own.
    for j in range(4):
        scale = abs(exact[f"b{j}"]) + exact[f"se{j}"]
        computed = fit.intercept_value if j == 0 else float(fit.slopes[j - 1])
        assert abs(computed - exact[f"b{j}"]) <= 1e-12 * scale
    for j in range(3):
        assert close(float(fit.se_slopes[j]), exact[f"se{j + 1}"], 1e-12)
    assert close(fit.residual_sd, exact["residual_sd"], 1e-12)
    assert close(fit.r_squared, exact["r_squared"], 1e-13)


@DETERMINISTIC
@given(series(n_min=10, n_max=30), st.integers(2, 5))
def test_numpy_engines_lie_within_the_engine_allowance(
    data: tuple[np.ndarray, np.ndarray], degree: int
) -> None:
    # numpy's Householder QR on the raw design (as a spreadsheet's LINEST works) and its SVD
    # solver on the column-scaled design are two other double-precision engines: their
    # coefficients must fall within what the conditioning says sound engines may differ by
    # (auditor.fit.conditioning), exact fits included.
    u, y = data
    x = np.column_stack([u**p for p in range(1, degree + 1)])
    fit = fit_ols(x, y)
    assert fit.conditioning is not None
    allowances = fit.conditioning.allowances
    names = ["intercept"] + [f"slope[{j}]" for j in range(1, degree + 1)]
    ours = np.concatenate(([fit.intercept_value], fit.slopes))
    design = np.column_stack([np.ones(u.size), x])
    q, r = np.linalg.qr(design)
    norms = np.linalg.norm(design, axis=0)
    for engine in (
        np.linalg.solve(r, q.T @ y),
        np.linalg.lstsq(design / norms, y, rcond=None)[0] / norms,
    ):
        for j, name in enumerate(names):
            assert abs(engine[j] - ours[j]) <= allowances[name], name


def test_well_conditioned_fit_stays_in_double_precision_and_matches_statsmodels() -> None:
    rng = np.random.default_rng(11)
    x = rng.normal(size=(40, 3))
    y = x @ np.array([1.0, -2.0, 0.5]) + rng.normal(size=40)
    fit = fit_ols(x, y)
    assert fit.conditioning is not None and fit.conditioning.solver == "double"
    ref = sm.OLS(y, sm.add_constant(x)).fit()  # statsmodels as the outside reference
    assert np.allclose(fit.slopes, ref.params[1:], rtol=1e-12, atol=0)
    assert np.allclose(fit.se_slopes, ref.bse[1:], rtol=1e-12, atol=0)


def test_a_large_ill_conditioned_fit_is_refined_to_the_exact_solution() -> None:
    # 30,000 rows of x, x², x³ at x ≈ 45,000 (dates as serial numbers): too large for the exact
    # solver's budget, condition number ~1e9. Exact rational arithmetic (auditor.fit.exact,
    # itself checked against fractions on the NIST data) is the reference.
    rng = np.random.default_rng(4)
    t = np.sort(rng.uniform(0.0, 400.0, 30_000))
    x = np.column_stack([(45_000 + t) ** p for p in (1, 2, 3)])
    y = 3 + 0.5 * t - 0.001 * t * t + rng.normal(size=t.size)
    fit = fit_ols(x, y)
    assert fit.conditioning is not None and fit.conditioning.solver == "refined"
    assert fit.conditioning.condition_number > 1e8
    exact = solve_exact(x, y, True)
    assert exact is not None
    computed = np.concatenate(([fit.intercept_value], fit.slopes))
    relative = np.abs(computed - exact.coefficients) / np.abs(exact.coefficients)
    assert np.all(relative < 1e-12), relative
    assert close(fit.residual_sd, math.sqrt(exact.ss_residual / fit.df), 1e-13)
