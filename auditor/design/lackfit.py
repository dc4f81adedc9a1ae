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
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from auditor.fit.distributions import f_sf
from auditor.fit.sums import exact_sum


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


def designed_replicates(
    x: ArrayLike, counted: tuple[NDArray[np.float64], NDArray[np.int64]] | None = None
) -> bool:
    """Whether repeated x levels look planned rather than coincidental ties.

    Replicates are a design when at least half of the levels are repeated, about equally often
    (duplicates at every standard; no level three times as frequent as another), or when a
    small design (at most 10 levels) repeats a level three times or more (centre-point
    replicates). Values rounded to a grid tie too, but unevenly (a bell of counts). A single
    repeated row among 8 levels, or the ties of rounded daily returns (12 % of 17,000 levels
    repeated), are coincidences: their "pure error" says nothing about the line, so no
    lack-of-fit test is made on them. ``counted``: what :func:`level_counts` gave for x, when
    the caller has it already.
    """
    if counted is None:
        counted = level_counts(x)  # one sort; level_groups only for x with a NaN or an infinity
    sizes = (
        counted[1]
        if counted is not None
        else np.array([len(g) for g in level_groups(x).values()], dtype=np.int64)
    )
    if not sizes.size:
        return False
    replicated = int(np.count_nonzero(sizes >= 2))
    largest, smallest = int(sizes.max()), int(sizes.min())
    balanced = largest <= 3 * smallest  # a plan repeats levels alike; rounding does not
    if 2 * replicated >= sizes.size and replicated >= 1 and balanced:
        return True
    return sizes.size <= 10 and largest >= 3


def level_counts(x: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.int64]] | None:
    """The distinct x values in increasing order and how often each occurs, in one sort; None
    when x holds a NaN or an infinity (np.unique would count every NaN as one level, where
    :func:`level_groups` counts each apart)."""
    values = np.asarray(x, dtype=np.float64)
    if not np.isfinite(values).all():
        return None
    distinct, counts = np.unique(values, return_counts=True)
    return distinct, counts


def count_levels(
    x: NDArray[np.float64],
) -> tuple[int, tuple[NDArray[np.float64], NDArray[np.int64]] | None]:
    """The number of distinct rows of an (n, k) x, and for one column what
    :func:`level_counts` gives (None for several columns), from one sort."""
    single = x.ndim == 2 and x.shape[1] == 1
    counted = level_counts(x[:, 0]) if single and x.size else None
    if counted is not None:
        return len(counted[0]), counted
    if x.size and np.isfinite(x).all():
        # One sort, not a set of n tuples (np.unique along an axis sorts rows as records:
        # about thirty times slower at 200,000 rows than one column sorted as numbers).
        return len(np.unique(x, axis=0)), None
    return len({tuple(row) for row in x.tolist()}), None


def _replicated_groups(x: NDArray[np.float64]) -> tuple[int, list[NDArray[np.intp]]] | None:
    """The number of levels and the row indices of each level that occurs more than once."""
    if not np.isfinite(x).all():
        return None
    _, inverse, counts = np.unique(x, return_inverse=True, return_counts=True)
    repeated = np.flatnonzero(counts[inverse] > 1)
    if repeated.size == 0:
        return int(counts.size), []
    order = repeated[np.argsort(inverse[repeated], kind="stable")]
    bounds = np.flatnonzero(np.diff(inverse[order])) + 1
    return int(counts.size), np.split(order, bounds)


def lack_of_fit(
    x: ArrayLike, y: ArrayLike, ss_residual: float, intercept: bool = True
) -> LackOfFit | None:
    """The test for a fitted line with residual SS ``ss_residual``; None when it cannot be made
    (no replicates, or no more levels than the line has parameters)."""
    y_values = np.asarray(y, dtype=np.float64)
    found = _replicated_groups(np.asarray(x, dtype=np.float64))
    groups: list[Any]
    if found is None:
        groups = list(level_groups(x).values())
        levels = len(groups)
    else:
        # A level seen once adds a deviation of exactly 0 to the pure error: only replicated
        # levels need summing, and math.fsum is exact, so the order of the pieces is immaterial.
        levels, groups = found[0], found[1]
    parameters = 2 if intercept else 1
    df_pure_error = y_values.size - levels
    df_lack_of_fit = levels - parameters
    if df_pure_error < 1 or df_lack_of_fit < 1 or not math.isfinite(ss_residual):
        return None
    squares = []  # arrays, not a list of a million Python floats
    for rows in groups:
        members = y_values[rows]
        mean = exact_sum(members) / members.size
        deviations = members - mean
        squares.append(deviations * deviations)
    ss_pure_error = exact_sum(np.concatenate(squares)) if squares else 0.0
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
