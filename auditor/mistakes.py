"""Named formula mistakes: the wrong computations people make when building a regression by hand.

Each hypothesis is a small function from a :class:`Basis` (the statistic under review, the
intended fit and its data) to the :class:`Candidate` numbers that mistake would give for that
statistic; it returns nothing where the mistake cannot apply. :data:`HYPOTHESES` lists them
simplest first, so adding a mistake is one function and one entry. A mistake in one piece carries
through what is built on it (a wrong SE gives a wrong t and p), so :func:`_carried` turns a wrong
coefficient, SE or t into the value of whichever statistic is under review.

Row-subset mistakes (short ranges, total rows, skipped text) need running sums over the data
and live in :mod:`auditor.diagnose`.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray
from scipy import stats as distributions

from auditor.fit import FitResult, fit_ols

Evidence = dict[str, float | int | str]

NAMES = {
    "slope": "slope",
    "intercept": "intercept",
    "se_slope": "SE of the slope",
    "se_intercept": "SE of the intercept",
    "t_slope": "t of the slope",
    "t_intercept": "t of the intercept",
    "p_slope": "p of the slope",
    "p_intercept": "p of the intercept",
    "df": "df",
    "n": "n",
    "residual_sd": "residual SD",
    "r_squared": "R²",
}

# Function names in a formula that point at one mistake: the candidate it names is shown first.
FORMULA_HINTS = {
    "p-one-tailed": re.compile(r"T\.DIST\.RT\(|TDIST\(.*,\s*1\s*\)\s*$", re.I),
    "p-left-tail": re.compile(r"(?<![.\w])T\.DIST\(", re.I),
    "p-normal-approx": re.compile(r"NORM", re.I),
    "se-uncentered-ssx": re.compile(r"SUMSQ\(", re.I),
    "se-sd-y": re.compile(r"STDEV", re.I),
}
# A whole number typed into a formula (not part of a reference such as E11 or $B$4).
NUMBER_LITERAL = re.compile(r"(?<![A-Za-z0-9_.$:])(\d+)(?![\d.]*[A-Za-z(!:$])")


def g(value: float) -> str:
    """A number as a reviewer reads it: four significant digits."""
    return f"{value:.4g}"


def pair(a: float, b: float) -> tuple[str, str]:
    """Two numbers with just enough digits (four at least) to tell them apart."""
    for digits in range(4, 13):
        left, right = f"{a:.{digits}g}", f"{b:.{digits}g}"
        if left != right:
            break
    return left, right


def stat_name(stat: str, j: int, k: int) -> str:
    name = NAMES.get(stat, stat)
    return f"{name} of x column {j + 1}" if k > 1 and stat in PER_SLOPE else name


PER_SLOPE = ("slope", "se_slope", "t_slope", "p_slope")


@dataclass(frozen=True)
class Candidate:
    kind: str
    value: float
    message: str  # the mistake in words, with the number it gives and the right one
    fix: str
    evidence: Evidence = field(default_factory=dict)


@dataclass(frozen=True)
class Basis:
    """What a hypothesis computes from: one statistic of the intended fit and the fit's data."""

    fit: FitResult
    x: NDArray[np.float64]  # (n, k) intended
    y: NDArray[np.float64]
    stat: str  # the key without "[j]" or "@cell": "p_slope", "se_slope", ...
    j: int = 0  # 0-based x column of a per-slope statistic
    formula: str | None = None
    x_range: str = "x"  # the intended ranges, as a fix should write them
    y_range: str = "y"

    @property
    def family(self) -> str:
        return "intercept" if self.stat.endswith("intercept") else "slope"

    def coefficient(self) -> tuple[float, float, float]:
        """(estimate, SE, t) of the coefficient the statistic belongs to."""
        fit = self.fit
        if self.family == "intercept":
            return fit.intercept_value, fit.se_intercept or math.nan, fit.t_intercept or math.nan
        j = self.j
        return float(fit.slopes[j]), float(fit.se_slopes[j]), float(fit.t_slopes[j])


Hypothesis = Callable[[Basis], list[Candidate]]


def two_sided(t: float, df: float) -> float:
    return float(2.0 * distributions.t.sf(abs(t), df)) if df > 0 else math.nan


def _usable(*values: float) -> bool:
    return all(math.isfinite(v) for v in values)


def _carried(b: Basis, level: str, wrong: float, kind: str, how: str, fix: str) -> list[Candidate]:
    """A wrong coefficient, SE or t carried into the statistic under review (t = b/SE, p)."""
    coef, se, t = b.coefficient()
    fam, df = b.family, b.fit.df
    coef_used = wrong if level == "coef" else coef
    se_used = wrong if level == "se" else se
    t_used = wrong if level == "t" else (coef_used / se_used if se_used else math.nan)
    values = {f"t_{fam}": t_used, f"p_{fam}": two_sided(t_used, df)}
    if level in ("coef", "se"):
        values[fam if level == "coef" else f"se_{fam}"] = wrong
    if b.stat not in values or not _usable(values[b.stat]):
        return []
    steps = [how]
    if b.stat.startswith(("t_", "p_")) and level != "t":
        steps.append(f"so t = {g(coef_used)} / {g(se_used)} = {g(t_used)}")
    if b.stat.startswith("p_"):
        steps.append(f"and the two-sided p with df {df} is {g(values[b.stat])}")
    evidence: Evidence = {"wrong_" + level: wrong, "t": t_used, "df": df}
    return [Candidate(kind, values[b.stat], ", ".join(steps), fix, evidence)]


# --- p-values from the right t ------------------------------------------------------------------


def _p_case(b: Basis) -> tuple[float, int] | None:
    t = b.coefficient()[2]
    return (t, b.fit.df) if b.stat.startswith("p_") and _usable(t) and b.fit.df > 0 else None


def _two_tailed_fix(df: int) -> str:
    return f"use T.DIST.2T(ABS(t), {df}) or TDIST(ABS(t), {df}, 2)"


def p_one_tailed(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    one = float(distributions.t.sf(abs(t), df))
    how = f"p is one-tailed: T.DIST.RT(|t|, {df}) gives {g(one)} = half the two-sided {g(2 * one)}"
    return [Candidate("p-one-tailed", one, how, _two_tailed_fix(df), {"t": t, "df": df})]


def p_left_tail(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    left = float(distributions.t.cdf(t, df))
    how = (
        f"p is the left tail T.DIST({g(t)}, {df}, TRUE) = {g(left)}, not the two-sided "
        f"{g(two_sided(t, df))}"
    )
    return [Candidate("p-left-tail", left, how, _two_tailed_fix(df), {"t": t, "df": df})]


def p_complement(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    p = two_sided(t, df)
    how = f"p is reported as 1 − p: {g(1 - p)} = 1 − the two-sided {g(p)}"
    fix = f"drop the '1 −': T.DIST.2T(ABS(t), {df}) is p itself"
    return [Candidate("p-complement", 1.0 - p, how, fix, {"t": t, "df": df})]


def p_normal_approx(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    one = float(distributions.norm.sf(abs(t)))
    fix = f"use the t distribution with df {df}: T.DIST.2T(ABS(t), {df})"
    evidence: Evidence = {"t": t, "df": df}
    return [
        Candidate(
            "p-normal-approx",
            2.0 * one,
            f"p comes from the normal distribution, 2·(1 − Φ(|t|)) = {g(2 * one)}, not from t "
            f"with df {df} ({g(two_sided(t, df))})",
            fix,
            evidence,
        ),
        Candidate(
            "p-normal-approx",
            one,
            f"p is a one-tailed normal probability, 1 − Φ(|t|) = {g(one)}, not the two-sided t "
            f"with df {df} ({g(two_sided(t, df))})",
            fix,
            evidence | {"tails": 1},
        ),
    ]


def _df_label(d: int, n: int) -> str:
    return "n" if d == n else f"n − {n - d}" if d < n else f"n + {d - n}"


def p_wrong_df(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    n = b.fit.n
    # The usual slips first (COUNT−1, COUNT, one too many subtracted), then by distance from df.
    common = [d for d in (n - 1, n, n - 3) if d >= 1 and d != df]
    others = sorted(set(range(1, n + 3)) - set(common) - {df}, key=lambda d: (abs(d - df), d))
    candidates = common + others
    # One vectorised call: a df search over 1..n+2 stays cheap for long tables.
    p_values = 2.0 * distributions.t.sf(abs(t), np.array(candidates, dtype=float))
    right = g(two_sided(t, df))
    fix = f"use df = {df} (COUNT(x) − {n - df}, or LINEST's df): T.DIST.2T(ABS(t), {df})"
    out = []
    for d, p in zip(candidates, p_values.tolist(), strict=True):
        how = (
            f"p uses df {d} ({_df_label(d, n)}) where the {n} points leave df {df}: "
            f"T.DIST.2T(|t|, {d}) = {g(p)}, the right p is {right}"
        )
        out.append(Candidate("p-wrong-df", p, how, fix, {"t": t, "df": df, "df_used": d}))
    return out


def _ci_typed_df(b: Basis) -> list[Candidate]:
    """A confidence limit whose critical t uses a typed df: ``E4 - TINV(0.05, 10) * E7``."""
    if b.stat not in ("ci_slope_low", "ci_slope_high") or not b.formula:
        return []
    slope, se = float(b.fit.slopes[b.j]), float(b.fit.se_slopes[b.j])
    if not _usable(slope, se):
        return []
    level, df, sign = b.fit.confidence, b.fit.df, (-1.0 if b.stat == "ci_slope_low" else 1.0)
    out = []
    for literal in sorted({int(m) for m in NUMBER_LITERAL.findall(b.formula)}):
        if literal < 1 or literal == df:
            continue
        limit = slope + sign * float(distributions.t.ppf(0.5 + level / 2, literal)) * se
        how = f"the critical t uses a typed df of {literal}, but the {b.fit.n} points leave df {df}"
        fix = f"replace the typed {literal} by COUNT(x) − {b.fit.n - df} or a reference to df"
        out.append(Candidate("hardcoded-constant", limit, how, fix, {"df_typed": literal}))
    return out


def hardcoded_constant(b: Basis) -> list[Candidate]:
    """A df typed into the p formula (``T.DIST.2T(ABS(E11), 10)``) that the data no longer give,
    or into the critical t of a confidence limit."""
    case = _p_case(b)
    if case is None or not b.formula:
        return _ci_typed_df(b)
    t, df = case
    out = []
    for literal in sorted({int(m) for m in NUMBER_LITERAL.findall(b.formula)}):
        if literal < 1 or literal == df:
            continue
        p = two_sided(t, literal)
        how = f"the formula types df as {literal}, but the {b.fit.n} points now leave df {df}"
        fix = f"replace the typed {literal} by COUNT(x) − {b.fit.n - df} or a reference to df"
        out.append(Candidate("hardcoded-constant", p, how, fix, {"df_typed": literal, "df": df}))
    return out


# --- standard errors, and the t and p built on them ---------------------------------------------


def _slope_se_case(b: Basis) -> tuple[float, float] | None:
    """(SE of slope j, residual SD) when the statistic is built on the slope's SE."""
    if b.family != "slope" or b.stat not in ("se_slope", "t_slope", "p_slope"):
        return None
    se, s = float(b.fit.se_slopes[b.j]), b.fit.residual_sd
    return (se, s) if _usable(se, s) and s > 0 else None


def se_intercept_for_slope(b: Basis) -> list[Candidate]:
    case = _slope_se_case(b)
    wrong = b.fit.se_intercept
    if case is None or wrong is None or not _usable(wrong):
        return []
    how = f"the SE of the intercept ({g(wrong)}) is used for the slope's ({g(case[0])})"
    fix = "take the slope's SE: STEYX/SQRT(DEVSQ(x)), or INDEX(LINEST(y, x, TRUE, TRUE), 2, 1)"
    return _carried(b, "se", wrong, "se-intercept-for-slope", how, fix)


def se_sd_y(b: Basis) -> list[Candidate]:
    sd_y = float(np.std(b.y, ddof=1)) if b.y.size > 1 else math.nan
    if b.stat == "residual_sd" and _usable(sd_y):
        how = f"the residual SD is STDEV(y) = {g(sd_y)}, not STEYX ({g(b.fit.residual_sd)})"
        return [Candidate("se-sd-y", sd_y, how, f"use STEYX({b.y_range}, {b.x_range})")]
    case = _slope_se_case(b)
    if case is None or not _usable(sd_y):
        return []
    se, s = case
    how = f"the SE uses the SD of y ({g(sd_y)}) instead of the residual SD ({g(s)})"
    fix = f"use STEYX({b.y_range}, {b.x_range}) in place of STDEV(y): SE = STEYX/SQRT(DEVSQ(x))"
    return _carried(b, "se", sd_y * se / s, "se-sd-y", how, fix)


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
    return _carried(b, "se", s / math.sqrt(sumsq), "se-uncentered-ssx", how, fix)


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
        out += _carried(b, "se", se * shrink, "se-n-not-n-2", how, fix)
    return out


def se_no_sqrt(b: Basis) -> list[Candidate]:
    case = _slope_se_case(b)
    if case is None:
        return []
    se, s = case
    fix = f"SE = STEYX/SQRT(DEVSQ({b.x_range})): the square root belongs over DEVSQ"
    return _carried(
        b, "se", se * se / s, "se-no-sqrt", f"the SE is s/Sxx = {g(se * se / s)}, not s/√Sxx", fix
    ) + _carried(
        b, "se", se * se, "se-no-sqrt", f"the SE is s²/Sxx = {g(se * se)}, not s/√Sxx", fix
    )


# --- t and coefficients ------------------------------------------------------------------------


def t_inverted(b: Basis) -> list[Candidate]:
    coef, se, _ = b.coefficient()
    if not b.stat.startswith(("t_", "p_")) or not coef or not _usable(coef, se):
        return []
    how = f"t is SE/estimate = {g(se)} / {g(coef)}, the division turned round"
    return _carried(
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
    return _carried(b, "coef", wrong, "xy-swapped", how, fix)


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


# Simplest first: a single slip in one function before wrong pieces carried through t and p.
HYPOTHESES: dict[str, Hypothesis] = {
    "p-one-tailed": p_one_tailed,
    "p-left-tail": p_left_tail,
    "p-complement": p_complement,
    "p-normal-approx": p_normal_approx,
    "p-wrong-df": p_wrong_df,
    "hardcoded-constant": hardcoded_constant,
    "xy-swapped": xy_swapped,
    "coefficient-order": coefficient_order,
    "se-intercept-for-slope": se_intercept_for_slope,
    "se-sd-y": se_sd_y,
    "se-uncentered-ssx": se_uncentered_ssx,
    "se-n-not-n-2": se_n_not_n_2,
    "se-no-sqrt": se_no_sqrt,
    "t-inverted": t_inverted,
}
