"""Standard-error and coefficient slips: a wrong SE, t or coefficient, and the t and p built on it
(the SD of y for STEYX, SUMSQ for DEVSQ, n for n − 2, x and y swapped, LINEST's column order).

Each function is one entry of :data:`auditor.diagnose.mistakes.MISTAKES`; a wrong piece is
carried into
the statistic under review by :func:`auditor.diagnose.basis.carried`.
"""

from __future__ import annotations

import math

import numpy as np

from auditor.diagnose.basis import NAMES, Basis, Candidate, carried, g, usable
from auditor.fit.ols import fit_ols


def _slope_se_case(b: Basis) -> tuple[float, float] | None:
    """(SE of slope j, residual SD) when the statistic is built on the slope's SE."""
    if b.family != "slope" or b.stat not in ("se_slope", "t_slope", "p_slope"):
        return None
    se, s = float(b.fit.se_slopes[b.j]), b.fit.residual_sd
    return (se, s) if usable(se, s) and s > 0 else None


def se_intercept_for_slope(b: Basis) -> list[Candidate]:
    case = _slope_se_case(b)
    wrong = b.fit.se_intercept
    if case is None or wrong is None or not usable(wrong):
        return []
    how = f"the SE of the intercept ({g(wrong)}) is used for the slope's ({g(case[0])})"
    fix = "take the slope's SE: STEYX/SQRT(DEVSQ(x)), or INDEX(LINEST(y, x, TRUE, TRUE), 2, 1)"
    return carried(b, "se", wrong, "se-intercept-for-slope", how, fix)


def se_sd_y(b: Basis) -> list[Candidate]:
    sd_y = float(np.std(b.y, ddof=1)) if b.y.size > 1 else math.nan
    if b.stat == "residual_sd" and usable(sd_y):
        how = f"the residual SD is STDEV(y) = {g(sd_y)}, not STEYX ({g(b.fit.residual_sd)})"
        return [Candidate("se-sd-y", sd_y, how, f"use STEYX({b.y_range}, {b.x_range})")]
    case = _slope_se_case(b)
    if case is None or not usable(sd_y):
        return []
    se, s = case
    how = f"the SE uses the SD of y ({g(sd_y)}) instead of the residual SD ({g(s)})"
    fix = f"use STEYX({b.y_range}, {b.x_range}) in place of STDEV(y): SE = STEYX/SQRT(DEVSQ(x))"
    return carried(b, "se", sd_y * se / s, "se-sd-y", how, fix)


def se_uncentered_ssx(b: Basis) -> list[Candidate]:
    case = _slope_se_case(b)
    if case is None or b.fit.k != 1 or not b.fit.intercept:
        return []
    s = case[1]
    sumsq = math.fsum(b.x[:, 0] ** 2)
    how = (
        f"the SE divides s by √SUMSQ(x) = {g(math.sqrt(sumsq))} instead of "
        f"√DEVSQ(x) = {g(math.sqrt(b.fit.sxx))}"
    )
    fix = f"divide by SQRT(DEVSQ({b.x_range})), not SQRT(SUMSQ({b.x_range}))"
    return carried(b, "se", s / math.sqrt(sumsq), "se-uncentered-ssx", how, fix)


def se_n_not_n_2(b: Basis) -> list[Candidate]:
    fit, out = b.fit, []
    extra = fit.n - fit.df
    for divisor in (fit.n, fit.n - 1):
        if divisor <= 0 or divisor == fit.df:
            continue
        shrink = math.sqrt(fit.df / divisor)
        label = "n" if divisor == fit.n else "n − 1"
        fix = f"s = SQRT(SSE/(n − {extra})), as STEYX computes it"
        if b.stat == "residual_sd":
            how = f"s divides the residual SS by {label} = {divisor} instead of n − {extra}"
            out.append(Candidate("se-n-not-n-2", fit.residual_sd * shrink, how, fix))
            continue
        if not b.stat.startswith(("se_", "t_", "p_")):
            continue
        se = b.coefficient()[1]
        how = f"s divides the residual SS by {label} = {divisor} instead of n − {extra}"
        out += carried(b, "se", se * shrink, "se-n-not-n-2", how, fix)
    return out


def se_no_sqrt(b: Basis) -> list[Candidate]:
    case = _slope_se_case(b)
    if case is None:
        return []
    se, s = case
    fix = f"SE = STEYX/SQRT(DEVSQ({b.x_range})): the square root belongs over DEVSQ"
    return carried(
        b, "se", se * se / s, "se-no-sqrt", f"the SE is s/Sxx = {g(se * se / s)}, not s/√Sxx", fix
    ) + carried(b, "se", se * se, "se-no-sqrt", f"the SE is s²/Sxx = {g(se * se)}, not s/√Sxx", fix)


# --- t and coefficients ------------------------------------------------------------------------


def t_inverted(b: Basis) -> list[Candidate]:
    coef, se, _ = b.coefficient()
    if not b.stat.startswith(("t_", "p_")) or not coef or not usable(coef, se):
        return []
    how = f"t is SE/estimate = {g(se)} / {g(coef)}, the division turned round"
    return carried(
        b,
        "t",
        se / coef,
        "t-inverted",
        how,
        "t = estimate / SE: the slope's cell divided by its SE's cell",
    )


def xy_swapped(b: Basis) -> list[Candidate]:
    if b.fit.k != 1 or b.fit.status != "ok" or b.family == "intercept" and b.stat != "intercept":
        return []
    swapped = fit_ols(b.y, b.x[:, 0], intercept=b.fit.intercept)  # regress x on y
    if swapped.status != "ok":
        return []
    fix = f"y first, then x: =SLOPE({b.y_range}, {b.x_range}) (likewise INTERCEPT, STEYX)"
    direct = {
        "intercept": swapped.intercept_value,
        "residual_sd": swapped.residual_sd,
        "se_slope": float(swapped.se_slopes[0]),
    }
    if b.stat in direct:
        how = f"x and y are swapped: the {NAMES[b.stat]} of x on y is {g(direct[b.stat])}"
        return [Candidate("xy-swapped", direct[b.stat], how, fix)]
    wrong = float(swapped.slopes[0])
    how = f"SLOPE has its arguments swapped: SLOPE(x, y) = {g(wrong)} is the slope of x on y"
    return carried(b, "coef", wrong, "xy-swapped", how, fix)


def coefficient_order(b: Basis) -> list[Candidate]:
    """LINEST lists slopes last column first: slope j read from another column's position."""
    fit = b.fit
    if fit.k < 2:
        return []
    arrays = {"slope": fit.slopes, "se_slope": fit.se_slopes, "t_slope": fit.t_slopes}
    arrays["p_slope"] = fit.p_slopes
    fix = (
        f"LINEST returns the slopes in reverse order of the x columns: slope j is "
        f"INDEX(LINEST(y, x, TRUE, TRUE), 1, {fit.k} + 1 − j)"
    )
    out: list[Candidate] = []
    if b.stat == "intercept":
        for i in range(fit.k):
            how = f"the intercept cell holds the slope of x column {i + 1} ({g(fit.slopes[i])})"
            out.append(Candidate("coefficient-order", float(fit.slopes[i]), how, fix))
        return out
    if b.stat not in arrays:
        return []
    for i in range(fit.k):
        if i != b.j:
            value = float(arrays[b.stat][i])
            how = f"it is the {NAMES[b.stat]} of x column {i + 1} ({g(value)}), read from LINEST"
            out.append(Candidate("coefficient-order", value, how, fix, {"column_read": i + 1}))
    if b.stat == "slope":
        how = f"it is the intercept ({g(fit.intercept_value)}), read from LINEST's last column"
        out.append(Candidate("coefficient-order", fit.intercept_value, how, fix))
    return out
