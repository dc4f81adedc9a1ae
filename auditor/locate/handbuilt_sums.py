"""The sums a hand-built slope is tested against: y on x as the spreadsheet's functions see two
ranges, and every number a mistake people make gives instead of the least-squares slope
(:mod:`auditor.locate.handbuilt` recognises cells by them; the diagnosis in
:mod:`auditor.diagnose.handbuilt` words the mistakes).
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import numpy as np

from auditor.read.workbook import ErrorValue

MIN_PAIRS = 3
MIN_LEVELS = 3  # distinct x values a line needs before its slope is more than two group means
RELATIVE = 1e-9


def same_number(a: float, b: float) -> bool:
    return math.isfinite(a) and math.isfinite(b) and abs(a - b) <= RELATIVE * max(abs(a), abs(b))


def is_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


@dataclass(frozen=True)
class Moments:
    """Sums of y on x as the spreadsheet's functions see two ranges: the pair functions
    (COVARIANCE, SLOPE, CORREL) keep rows where both cells are numbers; VAR and AVERAGE keep
    every number of their own range."""

    n: int
    x_mean: float
    y_mean: float
    sxx: float
    sxy: float
    syy: float
    n_x: int  # numbers in the x range, paired or not
    sxx_all: float
    n_y: int
    syy_all: float
    x_mean_all: float
    y_mean_all: float
    sxy_raw: float = 0.0  # Σxy and Σx² of the pairs: the line through the origin
    sxx_raw: float = 0.0

    @property
    def slope(self) -> float:
        return self.sxy / self.sxx

    @property
    def intercept(self) -> float:
        return self.y_mean - self.slope * self.x_mean

    def slope_readings(self) -> Iterator[tuple[str, float, dict[str, Any]]]:
        n = self.n
        yield "least-squares", self.slope, {}
        if self.sxx_raw > 0:  # SUMPRODUCT(x, y)/SUMSQ(x): the least-squares line through 0
            yield "through-origin", self.sxy_raw / self.sxx_raw, {}
        yield "population-sample-mix", self.slope * (n - 1) / n, {"factor": f"({n}-1)/{n}"}
        yield "population-sample-mix", self.slope * n / (n - 1), {"factor": f"{n}/({n}-1)"}
        if self.n_x != n and self.n_x > 1 and self.sxx_all > 0:
            for cov_ddof in (1, 0):
                for var_ddof in (1, 0):
                    value = (self.sxy / (n - cov_ddof)) / (self.sxx_all / (self.n_x - var_ddof))
                    yield "rows-differ", value, {"pairs": n, "x_numbers": self.n_x}
        if (self.n_x != n or self.n_y != n) and self.syy > 0 and self.n_y > 1:
            # CORREL over the pairs times STDEV(y)/STDEV(x) over every number of each range.
            r = self.sxy / math.sqrt(self.sxx * self.syy)
            ratio = math.sqrt((self.syy_all / (self.n_y - 1)) / (self.sxx_all / (self.n_x - 1)))
            yield "rows-differ", r * ratio, {"pairs": n, "x_numbers": self.n_x}

    def intercept_readings(
        self, slope_cells: list[tuple[str, float, str | None]]
    ) -> Iterator[tuple[str, float, dict[str, Any]]]:
        yield "least-squares", self.intercept, {}
        for address, slope, read_by in slope_cells:
            evidence: dict[str, Any] = {"slope_cell": address, "slope_value": slope}
            if read_by:
                evidence["read_by"] = read_by
            yield "slope-cell", self.y_mean - slope * self.x_mean, evidence
            yield "slope-cell", self.y_mean_all - slope * self.x_mean_all, evidence


def _number_mask(values: list[object]) -> np.ndarray | None:
    """Which values are numbers (as :func:`is_number` says), judged once per type present;
    None when one is an error value."""
    kinds = set(map(type, values))
    if any(issubclass(kind, ErrorValue) for kind in kinds):
        return None
    numeric = {k for k in kinds if issubclass(k, (int, float)) and not issubclass(k, bool)}
    if kinds <= numeric:
        return np.ones(len(values), dtype=bool)
    if not numeric:
        return np.zeros(len(values), dtype=bool)
    return np.fromiter((type(v) in numeric for v in values), dtype=bool, count=len(values))


@dataclass(frozen=True)
class Numbers:
    """One range's values as the sums read them: which are numbers (``is_number``), and each
    number as a float (NaN where the cell holds none). Found once per range, then shared by
    every pair the range is in."""

    mask: np.ndarray
    floats: np.ndarray

    def __len__(self) -> int:
        return int(self.mask.size)


def numbers_of(values: list[object]) -> Numbers | None:
    """The numbers of a range's values; None when one is an error value."""
    mask = _number_mask(values)
    if mask is None:
        return None
    if mask.all():
        return Numbers(mask, np.array(values, dtype=float))
    floats = np.full(len(values), np.nan)
    floats[mask] = np.array(values, dtype=object)[mask].astype(float)  # float() of each number
    return Numbers(mask, floats)


def moments_of(y_values: list[object], x_values: list[object]) -> Moments | None:
    """None when either range holds an error value (the functions would show it) or fewer
    than three pairs, or x does not vary."""
    if len(y_values) != len(x_values):
        raise ValueError("y and x differ in length")
    y_numbers, x_numbers = numbers_of(y_values), numbers_of(x_values)
    if y_numbers is None or x_numbers is None:
        return None
    return moments_between(y_numbers, x_numbers)


def moments_between(y: Numbers, x: Numbers) -> Moments | None:
    """:func:`moments_of` for ranges whose numbers are found already."""
    if len(y) != len(x):
        raise ValueError("y and x differ in length")
    paired = y.mask & x.mask
    if int(paired.sum()) < MIN_PAIRS:
        return None
    ys, xs = y.floats[paired], x.floats[paired]
    if np.array_equal(ys, xs):
        return None  # a column against itself (or its copy): slope 1 by construction
    if np.unique(xs).size < MIN_LEVELS:
        # Two x levels: the "slope" is a difference of two group means and the "intercept" a
        # group mean (with 0/1 data, proportions from COUNTIFS): equal by algebra, no line.
        return None
    dx, dy = xs - xs.mean(), ys - ys.mean()
    sxx = float(dx @ dx)
    if sxx <= 0:
        return None
    x_all, y_all = x.floats[x.mask], y.floats[y.mask]
    dx_all, dy_all = x_all - x_all.mean(), y_all - y_all.mean()
    return Moments(
        n=int(xs.size),
        x_mean=float(xs.mean()),
        y_mean=float(ys.mean()),
        sxx=sxx,
        sxy=float(dx @ dy),
        syy=float(dy @ dy),
        n_x=int(x_all.size),
        sxx_all=float(dx_all @ dx_all),
        n_y=int(y_all.size),
        syy_all=float(dy_all @ dy_all),
        x_mean_all=float(x_all.mean()),
        y_mean_all=float(y_all.mean()),
        sxy_raw=float(xs @ ys),
        sxx_raw=float(xs @ xs),
    )


def moments_swapped(found: Moments, y: Numbers, x: Numbers) -> Moments | None:
    """:func:`moments_between` of (``x``, ``y``) from ``found``, the moments of (``y``, ``x``):
    the same sums with the roles exchanged, only the new x's levels and Σ(new x)² computed.
    (A product of two doubles is the same either way round, and so is a dot product.)"""
    paired = y.mask & x.mask
    new_xs = y.floats[paired]
    if np.unique(new_xs).size < MIN_LEVELS or found.syy <= 0:
        return None
    return Moments(
        n=found.n,
        x_mean=found.y_mean,
        y_mean=found.x_mean,
        sxx=found.syy,
        sxy=found.sxy,
        syy=found.sxx,
        n_x=found.n_y,
        sxx_all=found.syy_all,
        n_y=found.n_x,
        syy_all=found.sxx_all,
        x_mean_all=found.y_mean_all,
        y_mean_all=found.x_mean_all,
        sxy_raw=found.sxy_raw,
        sxx_raw=float(new_xs @ new_xs),
    )
