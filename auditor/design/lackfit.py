"""Lack-of-fit F test of a straight line, possible when some x levels are replicated.

The residual sum of squares of the line splits into *pure error* (the scatter of replicates about
their own level mean, which no model of x can remove) and *lack of fit* (the distance of the level
means from the line). F = (SS_lof / df_lof) / (SS_pe / df_pe) with df_lof = levels − parameters
and df_pe = n − levels; a small p says the straight line does not describe the level means. This
is the comparison of the line with the level-means (one-way) model, as an ANOVA of nested models
computes it (tests/test_design_lackfit.py checks it against statsmodels' anova_lm).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from auditor.fit.distributions import f_sf


@dataclass(frozen=True)
class LackOfFit:
    f: float  # inf when the replicates agree exactly but the means miss the line
    p: float
    df_lack_of_fit: int
    df_pure_error: int
    ss_lack_of_fit: float
    ss_pure_error: float

    @property
    def pure_error_sd(self) -> float:
        return math.sqrt(self.ss_pure_error / self.df_pure_error)


def level_groups(x: ArrayLike) -> dict[float, list[int]]:
    """Row indices per distinct x value (exact equality: typed levels repeat exactly)."""
    groups: dict[float, list[int]] = {}
    for index, value in enumerate(np.asarray(x, dtype=np.float64).tolist()):
        groups.setdefault(value, []).append(index)
    return groups


def designed_replicates(x: ArrayLike) -> bool:
    """Whether repeated x levels look planned rather than coincidental ties.

    Replicates are a design when at least half of the levels are repeated, about equally often
    (duplicates at every standard; no level three times as frequent as another), or when a
    small design (at most 10 levels) repeats a level three times or more (centre-point
    replicates). Values rounded to a grid tie too, but unevenly (a bell of counts). A single
    repeated row among 8 levels, or the ties of rounded daily returns (12 % of 17,000 levels
    repeated), are coincidences: their "pure error" says nothing about the line, so no
    lack-of-fit test is made on them.
    """
    groups = level_groups(x)
    if not groups:
        return False
    sizes = [len(rows) for rows in groups.values()]
    replicated = sum(1 for size in sizes if size >= 2)
    balanced = max(sizes) <= 3 * min(sizes)  # a plan repeats levels alike; rounding does not
    if 2 * replicated >= len(sizes) and replicated >= 1 and balanced:
        return True
    return len(sizes) <= 10 and max(sizes) >= 3


def lack_of_fit(
    x: ArrayLike, y: ArrayLike, ss_residual: float, intercept: bool = True
) -> LackOfFit | None:
    """The test for a fitted line with residual SS ``ss_residual``; None when it cannot be made
    (no replicates, or no more levels than the line has parameters)."""
    y_values = np.asarray(y, dtype=np.float64)
    groups = level_groups(x)
    parameters = 2 if intercept else 1
    levels = len(groups)
    df_pure_error = y_values.size - levels
    df_lack_of_fit = levels - parameters
    if df_pure_error < 1 or df_lack_of_fit < 1 or not math.isfinite(ss_residual):
        return None
    pieces = []
    for rows in groups.values():
        members = y_values[rows]
        mean = math.fsum(members) / members.size
        pieces.extend((members - mean).tolist())
    deviations = np.asarray(pieces)
    ss_pure_error = math.fsum(deviations * deviations)
    # Rounding can leave SS_lof a hair below 0 when the level means lie on the line.
    ss_lack_of_fit = max(0.0, ss_residual - ss_pure_error)
    if ss_pure_error == 0.0:
        if ss_lack_of_fit == 0.0:
            return None  # every point on the line: nothing to test
        return LackOfFit(
            math.inf, 0.0, df_lack_of_fit, df_pure_error, ss_lack_of_fit, ss_pure_error
        )
    f = (ss_lack_of_fit / df_lack_of_fit) / (ss_pure_error / df_pure_error)
    p = float(f_sf(f, df_lack_of_fit, df_pure_error))
    return LackOfFit(f, p, df_lack_of_fit, df_pure_error, ss_lack_of_fit, ss_pure_error)
