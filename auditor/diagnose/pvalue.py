"""p-value slips: a wrong p computed from the right t (one tail, 1 − p, the normal
distribution, the wrong or a typed df).

Each function is one entry of :data:`auditor.diagnose.mistakes.MISTAKES`: from a :class:`Basis` it
returns the :class:`Candidate` numbers that slip would give, or nothing where it cannot apply.
"""

from __future__ import annotations

import numpy as np

from auditor.diagnose.basis import NUMBER_LITERAL, Basis, Candidate, Evidence, g, two_sided, usable
from auditor.fit.distributions import norm_sf, t_cdf, t_ppf, t_sf


def _p_case(b: Basis) -> tuple[float, int] | None:
    t = b.coefficient()[2]
    return (t, b.fit.df) if b.stat.startswith("p_") and usable(t) and b.fit.df > 0 else None


def _two_tailed_fix(df: int) -> str:
    return f"use T.DIST.2T(ABS(t), {df}) or TDIST(ABS(t), {df}, 2)"


def p_one_tailed(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    one = float(t_sf(abs(t), df))
    how = f"p is one-tailed: T.DIST.RT(|t|, {df}) gives {g(one)} = half the two-sided {g(2 * one)}"
    return [Candidate("p-one-tailed", one, how, _two_tailed_fix(df), {"t": t, "df": df})]


def p_left_tail(b: Basis) -> list[Candidate]:
    case = _p_case(b)
    if case is None:
        return []
    t, df = case
    left = float(t_cdf(t, df))
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
    one = float(norm_sf(abs(t)))
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
    p_values = 2.0 * t_sf(abs(t), np.array(candidates, dtype=float))
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
    if not usable(slope, se):
        return []
    level, df, sign = b.fit.confidence, b.fit.df, (-1.0 if b.stat == "ci_slope_low" else 1.0)
    out = []
    for literal in sorted({int(m) for m in NUMBER_LITERAL.findall(b.formula)}):
        if literal < 1 or literal == df:
            continue
        limit = slope + sign * float(t_ppf(0.5 + level / 2, literal)) * se
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
