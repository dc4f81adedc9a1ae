"""Brent's root search, step for step as ``scipy.optimize.brentq`` takes it.

The power solves need one root search each. ``scipy.optimize`` costs about a quarter of a second
to import, most of a small audit's start-up, for this one function; this is the same algorithm
(R. P. Brent, "Algorithms for Minimization without Derivatives", 1973, chapter 4, in the form of
scipy's ``brentq.c``), with the same tolerances and the same order of floating-point
operations, so it returns the same root to the last bit (tests/test_design_brent.py compares it
with scipy's on many functions).
"""

from __future__ import annotations

import math
from collections.abc import Callable

RELATIVE_TOLERANCE = 4 * 2.220446049250313e-16  # scipy's default rtol: four machine epsilons


def brentq(
    f: Callable[[float], float],
    a: float,
    b: float,
    xtol: float = 2e-12,
    rtol: float = RELATIVE_TOLERANCE,
    maxiter: int = 100,
) -> float:
    """A root of ``f`` in [a, b], where f(a) and f(b) differ in sign."""
    if xtol <= 0:
        raise ValueError(f"xtol too small ({xtol:g} <= 0)")
    if rtol < RELATIVE_TOLERANCE:
        raise ValueError(f"rtol too small ({rtol:g} < {RELATIVE_TOLERANCE:g})")
    xpre, xcur = float(a), float(b)
    xblk = fblk = spre = scur = 0.0
    fpre, fcur = float(f(xpre)), float(f(xcur))
    if fpre == 0:
        return xpre
    if fcur == 0:
        return xcur
    if math.copysign(1.0, fpre) == math.copysign(1.0, fcur):
        raise ValueError("f(a) and f(b) must have different signs")
    for _ in range(maxiter):
        if fpre != 0 and fcur != 0 and math.copysign(1.0, fpre) != math.copysign(1.0, fcur):
            xblk, fblk = xpre, fpre
            spre = scur = xcur - xpre
        if abs(fblk) < abs(fcur):
            xpre, xcur, xblk = xcur, xblk, xcur
            fpre, fcur, fblk = fcur, fblk, fcur
        delta = (xtol + rtol * abs(xcur)) / 2
        sbis = (xblk - xcur) / 2
        if fcur == 0 or abs(sbis) < delta:
            return xcur
        if abs(spre) > delta and abs(fcur) < abs(fpre):
            if xpre == xblk:
                stry = -fcur * (xcur - xpre) / (fcur - fpre)  # interpolate
            else:
                dpre = (fpre - fcur) / (xpre - xcur)  # extrapolate
                dblk = (fblk - fcur) / (xblk - xcur)
                stry = -fcur * (fblk * dblk - fpre * dpre) / (dblk * dpre * (fblk - fpre))
            if 2 * abs(stry) < min(abs(spre), 3 * abs(sbis) - delta):
                spre, scur = scur, stry  # a good short step
            else:
                spre = scur = sbis  # bisect
        else:
            spre = scur = sbis  # bisect
        xpre, fpre = xcur, fcur
        if abs(scur) > delta:
            xcur += scur
        else:
            xcur += delta if sbis > 0 else -delta
        fcur = float(f(xcur))
    raise RuntimeError(f"no convergence in {maxiter} iterations; the last estimate {xcur!r}")
