"""auditor.design.brent.brentq returns scipy.optimize.brentq's root to the last bit (the
reference), on smooth, flat, steep and awkward functions."""

from __future__ import annotations

import math

import pytest
from scipy import optimize, stats

from auditor.design.brent import brentq

CASES = [
    (lambda x: x * x - 2.0, 0.0, 2.0),
    (lambda x: math.cos(x) - x, 0.0, 1.0),
    (lambda x: x**3 - 2 * x - 5, 2.0, 3.0),
    (lambda x: math.exp(x) - 1e6, 0.0, 20.0),
    (lambda x: math.atan(x - 0.3) * 1e-9, -5.0, 5.0),
    (lambda x: math.sin(x), 3.0, 4.0),
    (lambda x: math.tanh(50 * (x - 0.123)), -1.0, 1.0),
    (lambda x: x - 4.0, 0.0, 4.0),  # a root at the end of the bracket
    (lambda x: 1.0 if x > 0.5 else -1.0, 0.0, 1.0),  # a step: bisection to the end
    (lambda x: stats.nct.sf(2.2, 5, x) - 0.8, 0.0, 8.0),  # a power solve
]


@pytest.mark.parametrize("index", range(len(CASES)))
@pytest.mark.parametrize("xtol", [2e-12, 1e-12, 1e-6])
def test_same_root_as_scipy(index: int, xtol: float) -> None:
    f, a, b = CASES[index]
    assert brentq(f, a, b, xtol=xtol) == optimize.brentq(f, a, b, xtol=xtol)


def test_reversed_bracket_and_errors_as_scipy() -> None:
    f = CASES[1][0]
    assert brentq(f, 1.0, 0.0) == optimize.brentq(f, 1.0, 0.0)
    with pytest.raises(ValueError, match="different signs"):
        brentq(lambda x: x * x + 1.0, -1.0, 1.0)
    with pytest.raises(ValueError, match="xtol"):
        brentq(f, 0.0, 1.0, xtol=0.0)
    with pytest.raises(RuntimeError, match="no convergence"):
        brentq(f, 0.0, 1.0, maxiter=2)


def test_the_square_root_of_two() -> None:
    assert brentq(lambda x: x * x - 2.0, 0.0, 2.0) == pytest.approx(math.sqrt(2.0), abs=1e-12)


def test_gives_up_where_scipy_gives_up() -> None:
    # (x - 1)^7 is too flat at its root for 100 steps: scipy stops at the same estimate.
    stopped = optimize.brentq(lambda x: (x - 1.0) ** 7, 0.0, 3.1, full_output=True, disp=False)
    assert not stopped[1].converged
    with pytest.raises(RuntimeError, match=repr(stopped[0])):
        brentq(lambda x: (x - 1.0) ** 7, 0.0, 3.1)
