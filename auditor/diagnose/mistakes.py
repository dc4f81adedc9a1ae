"""Named formula mistakes: the wrong computations people make when building a regression by hand.

Each hypothesis is a small function from a :class:`Basis` (the statistic under review, the
intended fit and its data) to the :class:`Candidate` numbers that mistake would give for that
statistic; it returns nothing where the mistake cannot apply. :data:`MISTAKES` lists them
simplest first, each with the formula text that points at it, so adding a mistake is one function
(in the module of its family) and one entry here. The families:

- :mod:`auditor.diagnose.pvalue`: a wrong p from the right t;
- :mod:`auditor.diagnose.se`: a wrong SE, t or coefficient, carried into the t and p built on it;
- :mod:`auditor.diagnose.basis`: what they share (:class:`Basis`, :class:`Candidate`, wording).

Row-subset mistakes (short ranges, total rows, skipped text) need running sums over the data
and live in :mod:`auditor.diagnose.rowsearch` and :mod:`auditor.diagnose.rows`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from auditor.diagnose.basis import (
    NAMES,
    NUMBER_LITERAL,
    PER_SLOPE,
    Basis,
    Candidate,
    Evidence,
    Hypothesis,
    g,
    pair,
    stat_name,
    two_sided,
)
from auditor.diagnose.pvalue import (
    hardcoded_constant,
    p_complement,
    p_left_tail,
    p_normal_approx,
    p_one_tailed,
    p_wrong_df,
)
from auditor.diagnose.se import (
    coefficient_order,
    se_intercept_for_slope,
    se_n_not_n_2,
    se_no_sqrt,
    se_sd_y,
    se_uncentered_ssx,
    t_inverted,
    xy_swapped,
)

# The names other modules have always imported from here.
__all__ = [
    "MISTAKES",
    "Mistake",
    "NAMES",
    "NUMBER_LITERAL",
    "PER_SLOPE",
    "Basis",
    "Candidate",
    "Evidence",
    "Hypothesis",
    "g",
    "pair",
    "stat_name",
    "two_sided",
    "coefficient_order",
    "hardcoded_constant",
    "p_complement",
    "p_left_tail",
    "p_normal_approx",
    "p_one_tailed",
    "p_wrong_df",
    "se_intercept_for_slope",
    "se_n_not_n_2",
    "se_no_sqrt",
    "se_sd_y",
    "se_uncentered_ssx",
    "t_inverted",
    "xy_swapped",
]


@dataclass(frozen=True)
class Mistake:
    """One named mistake: its kind, the hypothesis that computes what it would give, and the
    formula text that points at it (its candidate is then shown first)."""

    kind: str
    hypothesis: Hypothesis
    hint: re.Pattern[str] | None = None


# Simplest first: a single slip in one function before wrong pieces carried through t and p.
# Adding a mistake is one hypothesis function (in its family's module) and one entry here.
MISTAKES: tuple[Mistake, ...] = (
    Mistake(
        "p-one-tailed", p_one_tailed, re.compile(r"T\.DIST\.RT\(|TDIST\(.*,\s*1\s*\)\s*$", re.I)
    ),
    Mistake("p-left-tail", p_left_tail, re.compile(r"(?<![.\w])T\.DIST\(", re.I)),
    Mistake("p-complement", p_complement),
    Mistake("p-normal-approx", p_normal_approx, re.compile(r"NORM", re.I)),
    Mistake("p-wrong-df", p_wrong_df),
    Mistake("hardcoded-constant", hardcoded_constant),
    Mistake("xy-swapped", xy_swapped),
    Mistake("coefficient-order", coefficient_order),
    Mistake("se-intercept-for-slope", se_intercept_for_slope),
    Mistake("se-sd-y", se_sd_y, re.compile(r"STDEV", re.I)),
    Mistake("se-uncentered-ssx", se_uncentered_ssx, re.compile(r"SUMSQ\(", re.I)),
    Mistake("se-n-not-n-2", se_n_not_n_2),
    Mistake("se-no-sqrt", se_no_sqrt),
    Mistake("t-inverted", t_inverted),
)
