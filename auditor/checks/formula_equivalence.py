"""Two formulas are equivalent on a workbook when they read the same cells and compute the same
value there.

Spellings differ for one statistic: ``TDIST(ABS(t),df,2)`` and ``T.DIST.2T(ABS(t),df)``,
``INDEX(LINEST(y,x),1,2)`` and ``INTERCEPT(y,x)``, ``STEYX`` and ``SQRT(SUMXMY2(…)/(n-2))``.
Listing the spellings would never end (design: generalise, do not enumerate); evaluating both
with the project's evaluator on the cells they read settles it for the data at hand. The cells
read must be the same too: ``TDIST(ABS(E11),10,2)`` gives the number of ``T.DIST.2T(ABS(E11),E9)``
while E9 holds 10, but stops doing so when a row is added. A formula that cannot be evaluated
is never called equivalent.
"""

from __future__ import annotations

import math

import numpy as np

from auditor.errors import FormulaError, Unsupported
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import parse, references
from auditor.grid import parse_cell

RELATIVE = 1e-9  # engine differences in the last digits (design: precision-aware agreement)


def _scalar(value: object) -> float | None:
    if isinstance(value, np.ndarray):
        if value.size != 1:
            return None
        value = value.reshape(-1)[0]
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    number = float(value)
    return number if math.isfinite(number) else None


def value_of_formula(evaluator: Evaluator, formula: str, sheet: str) -> float | None:
    """``formula`` evaluated as if written on ``sheet``; None when it is no finite number."""
    try:
        return _scalar(evaluator.evaluate(formula, sheet))
    except (Unsupported, FormulaError):
        return None


def value_of_cell(evaluator: Evaluator, address: str) -> float | None:
    """The as-written value of ``Sheet!A1``; None when it is no finite number."""
    sheet, _, coord = address.rpartition("!")
    try:
        row, col = parse_cell(coord)
        return _scalar(evaluator.cell_value(sheet, row, col))
    except (Unsupported, FormulaError, ValueError):
        return None


def same_number(a: float | None, b: float | None, relative: float = RELATIVE) -> bool:
    if a is None or b is None:
        return False
    return abs(a - b) <= relative * max(abs(a), abs(b)) or a == b


def cells_read(
    evaluator: Evaluator, formula: str, sheet: str
) -> set[tuple[str, int, int, int, int]]:
    """The ranges a formula reads, as (sheet, r1, c1, r2, c2); empty when it cannot be parsed."""
    try:
        node = parse(formula, sheet, evaluator.workbook)
    except FormulaError:
        return set()
    return {(r.sheet.lower(), r.r1, r.c1, r.r2, r.c2) for r in references(node)}


def computes_the_same(
    evaluator: Evaluator | None, address: str, formula: str, written: str | None = None
) -> bool:
    """The cell at ``address`` (whose formula is ``written``) and ``formula`` (written on its
    sheet) read the same cells and give the same number."""
    if evaluator is None:
        return False
    sheet = address.rpartition("!")[0]
    if written is not None:
        mine = cells_read(evaluator, written, sheet)
        if not mine or mine != cells_read(evaluator, formula, sheet):
            return False
    return same_number(
        value_of_cell(evaluator, address), value_of_formula(evaluator, formula, sheet)
    )
