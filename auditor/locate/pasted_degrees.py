"""The residual df and confidence levels a pasted coefficients table's p-values and bounds imply."""

from __future__ import annotations

import math

from auditor.fit.distributions import t_ppf, t_sf
from auditor.locate.pasted_parts import IDENTITY_RELATIVE, Anova, CoefficientRow, close

MAX_DF = 10**8


def two_sided_p(t: float, df: int) -> float:
    return float(2.0 * t_sf(abs(t), df))


def solve_df(t: float, p: float) -> int | None:
    """The integer df whose two-sided p for ``t`` is ``p`` (p falls as df grows), if one is."""
    if not (0.0 < p < 1.0) or not math.isfinite(t) or t == 0.0:
        return None
    low, high = 1, MAX_DF
    if two_sided_p(t, high) > p * (1 + IDENTITY_RELATIVE) or two_sided_p(t, low) < p * (
        1 - IDENTITY_RELATIVE
    ):
        return None
    while high - low > 1:
        middle = (low + high) // 2
        if two_sided_p(t, middle) > p:
            low = middle
        else:
            high = middle
    for df in (low, high):
        if close(two_sided_p(t, df), p, rel=1e-5):
            return df
    return None


def residual_df(run: list[CoefficientRow], anova: Anova | None) -> int | None:
    """The residual df the p-values imply, agreeing with the analysis of variance if any."""
    trusted = [row for row in run if row.consistent]
    solved = [d for row in trusted if (d := solve_df(row.t, row.p)) is not None]
    df = anova.df_residual if anova is not None else (solved[0] if solved else None)
    if df is None:
        return None
    for row in trusted:
        if 1e-250 < row.p < 1.0 and not close(two_sided_p(row.t, df), row.p, rel=1e-5):
            return None
    return df


def confidence_levels(run: list[CoefficientRow], df: int) -> list[float] | None:
    """The confidence level of each pair of bounds, from its half-width in standard errors."""
    trusted = [row for row in run if row.consistent]
    pairs = min(len(row.bounds) for row in trusted)
    levels = []
    for index in range(pairs):
        row = trusted[0]
        low, high = row.bounds[index]
        multiplier = (high - low) / (2.0 * row.se)
        level = 1.0 - 2.0 * float(t_sf(multiplier, df))
        rounded = round(level, 4)  # levels are typed as whole or tenths of a percent
        if not close(float(t_ppf(0.5 + rounded / 2, df)), multiplier, rel=1e-5):
            return None
        levels.append(rounded)
    if any(len(row.bounds) < pairs for row in run):
        return None  # an edited row without the bounds its table shows
    for row in run:
        del row.bounds[pairs:]
    return levels
