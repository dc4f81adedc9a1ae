"""What the roles-from-words checks (:mod:`auditor.checks.axis_words`) share: which
regressions have roles the words can contradict, the numbers of a range, the fit over the
pairs a SLOPE-family function would use, and the conclusion's change in words."""

from __future__ import annotations

import numpy as np

from auditor.context import WorkbookContext
from auditor.fit.ols import FitResult, fit_ols
from auditor.formula.syntax import Ref
from auditor.locate.spec import RegressionSpec
from auditor.read.workbook import Workbook
from auditor.wording import fmt

MIN_POINTS = 3
SYMMETRIC = frozenset({"RSQ", "CORREL", "PEARSON"})  # the same value with x and y swapped


def symmetric_only(spec: RegressionSpec) -> bool:
    """Are the calls that read the regression's own pair all symmetric in x and y (RSQ,
    CORREL), and nothing else oriented it? Then its roles of x and y are the locator's guess,
    not the author's."""
    if spec.found_by != "formulas":
        return False  # oriented otherwise: a hand-built slope beside, a chart's axes, a table
    pair, mirror = (key_of(spec.y), key_of(spec.x)), (key_of(spec.x), key_of(spec.y))
    own = [use for use in spec.uses if (key_of(use.y), key_of(use.x)) in (pair, mirror)]
    return bool(own) and all(use.function in SYMMETRIC for use in own)


def mirrored(context: WorkbookContext, spec: RegressionSpec) -> bool:
    """Does some formula of the workbook fit the pair the other way round (an inverse fit
    beside the direct one)? Then no order of the formulas contradicts the words."""
    mirror = (key_of(spec.x), key_of(spec.y))
    return any(
        use.function not in SYMMETRIC and (key_of(use.y), key_of(use.x)) == mirror
        for other in context.specs
        if other is not spec
        for use in other.uses
    )


def key_of(ref: Ref) -> tuple[str, int, int, int, int]:
    return (ref.sheet.lower(), ref.r1, ref.c1, ref.r2, ref.c2)


def values(workbook: Workbook, ref: Ref) -> list[float | None]:
    """The numbers of a range in reading order (None where a cell holds no number)."""
    sheet = workbook.sheet(ref.sheet)
    out: list[float | None] = []
    for row in range(ref.r1, ref.r2 + 1):
        for col in range(ref.c1, ref.c2 + 1):
            value = sheet.value(row, col) if sheet is not None else None
            number = isinstance(value, (int, float)) and not isinstance(value, bool)
            out.append(float(value) if number else None)  # type: ignore[arg-type]
    return out


def paired_fit(y: list[float | None], x: list[float | None], intercept: bool) -> FitResult | None:
    """The fit over the pairs where both cells hold numbers (SLOPE's rule), None if too few."""
    pairs = [(a, b) for a, b in zip(y, x, strict=False) if a is not None and b is not None]
    if len(pairs) < MIN_POINTS:
        return None
    ys, xs = np.array(pairs).T
    if not np.ptp(xs) > 0:
        return None
    return fit_ols(xs, ys, intercept=intercept)


def read_elsewhere(context: WorkbookContext, spec: RegressionSpec, meant: Ref) -> bool:
    """Does another regression of the workbook read the range the words name? Then the words
    may well be that regression's (a title over two blocks), not evidence of a shift."""
    return any(
        key_of(ref) == key_of(meant)
        for other in context.specs
        if other is not spec
        for ref in (other.x, other.y)
    )


def conclusion_changes(
    written: dict[str, float | int | None], meant: dict[str, float | int | None], alpha: float
) -> str:
    """Words for how the conclusion changes between the two fits ('' when it does not)."""
    p_a, p_b = written.get("p_slope"), meant.get("p_slope")
    s_a, s_b = written.get("slope"), meant.get("slope")
    said = []
    if p_a is not None and p_b is not None and (p_a < alpha) != (p_b < alpha):
        said.append(f"significance at α = {fmt(alpha)} changes")
    if s_a is not None and s_b is not None and s_a * s_b < 0:
        said.append("the slope changes sign")
    return ": " + " and ".join(said) if said else ""


def offset_words(read: Ref, meant: Ref) -> str:
    """'one column to the right of the one meant' and the like."""
    if read.c1 != meant.c1:
        steps, unit, ways = read.c1 - meant.c1, "column", ("to the right of", "to the left of")
    else:
        steps, unit, ways = read.r1 - meant.r1, "row", ("below", "above")
    count = "one" if abs(steps) == 1 else str(abs(steps))
    plural = "" if abs(steps) == 1 else "s"
    return f"{count} {unit}{plural} {ways[0] if steps > 0 else ways[1]} the one meant"
