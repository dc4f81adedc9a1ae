"""What every named formula mistake is built from: the :class:`Basis` it computes from, the
:class:`Candidate` it proposes, and the wording and carrying helpers they share.

A mistake in one piece carries through what is built on it (a wrong SE gives a wrong t and p),
so :func:`carried` turns a wrong coefficient, SE or t into the value of whichever statistic is
under review. The hypotheses themselves live in :mod:`auditor.diagnose.pvalue` and
:mod:`auditor.diagnose.se`; :data:`auditor.diagnose.mistakes.MISTAKES` lists them.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from auditor.fit.distributions import t_sf
from auditor.fit.ols import FitResult

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
    return float(2.0 * t_sf(abs(t), df)) if df > 0 else math.nan


def usable(*values: float) -> bool:
    return all(math.isfinite(v) for v in values)


def carried(b: Basis, level: str, wrong: float, kind: str, how: str, fix: str) -> list[Candidate]:
    """A wrong coefficient, SE or t carried into the statistic under review (t = b/SE, p)."""
    coef, se, t = b.coefficient()
    fam, df = b.family, b.fit.df
    coef_used = wrong if level == "coef" else coef
    se_used = wrong if level == "se" else se
    t_used = wrong if level == "t" else (coef_used / se_used if se_used else math.nan)
    values = {f"t_{fam}": t_used, f"p_{fam}": two_sided(t_used, df)}
    if level in ("coef", "se"):
        values[fam if level == "coef" else f"se_{fam}"] = wrong
    if b.stat not in values or not usable(values[b.stat]):
        return []
    steps = [how]
    if b.stat.startswith(("t_", "p_")) and level != "t":
        steps.append(f"so t = {g(coef_used)} / {g(se_used)} = {g(t_used)}")
    if b.stat.startswith("p_"):
        steps.append(f"and the two-sided p with df {df} is {g(values[b.stat])}")
    evidence: Evidence = {"wrong_" + level: wrong, "t": t_used, "df": df}
    return [Candidate(kind, values[b.stat], ", ".join(steps), fix, evidence)]
