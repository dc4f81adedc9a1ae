"""A fix that repairs the cause, in a formula: what a reported cell should hold.

A reviewer is never told to type a number ("report 0.00253166"): a typed result stops following
its data, which the pasted-result check itself warns about. The fix is a formula over the rows of
the intended table, written as it would be typed into the cell (the sheet named only when the
data sit on another one). Its value is the intended value; tests put every suggested formula
into the workbook model and evaluate it with the project's evaluator (and, optionally, with
LibreOffice) to prove it.

The data rows must be one contiguous block: a table with a total row or a text cell in its
middle cannot be repaired by a range alone, and no formula is suggested (the cause's own fix,
"convert the cell to a number", says what to do).
"""

from __future__ import annotations

from auditor.extract.record import Extracted
from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.locate.roles import linest_block_role
from auditor.locate.spec import RegressionSpec
from auditor.model import stat_base

SIMPLE = {
    "slope": "SLOPE({y},{x})",
    "intercept": "INTERCEPT({y},{x})",
    "residual_sd": "STEYX({y},{x})",
    "r_squared": "RSQ({y},{x})",
    "r": "CORREL({y},{x})",
    "n": "COUNT({y})",
    "df": "COUNT({y})-2",
    "se_slope": "STEYX({y},{x})/SQRT(DEVSQ({x}))",
    "t_slope": "SLOPE({y},{x})/(STEYX({y},{x})/SQRT(DEVSQ({x})))",
    "p_slope": "T.DIST.2T(ABS(SLOPE({y},{x})/(STEYX({y},{x})/SQRT(DEVSQ({x})))),COUNT({y})-2)",
}


def _local(sheet: str, c1: int, r1: int, c2: int, r2: int, on_sheet: str) -> str:
    block = f"{column_letter(c1)}{r1}:{column_letter(c2)}{r2}"
    if sheet.lower() == on_sheet.lower():
        return block
    plain = sheet.replace("_", "").isalnum() and not sheet[0].isdigit()
    return (f"{sheet}" if plain else "'" + sheet.replace("'", "''") + "'") + f"!{block}"


def intended_ranges(spec: RegressionSpec, data: Extracted) -> tuple[Ref, Ref] | None:
    """The x and y ranges over exactly the rows of the intended fit, when they are contiguous
    rows of the author's columns; None otherwise."""
    used = [p.row for p in data.points if p.used]
    if not used or used != list(range(used[0], used[-1] + 1)) or data.parsed:
        return None  # a text cell read as a number needs converting, not a new range
    if spec.in_rows:
        return _intended_across(spec, used)
    if (
        spec.x.sheet.lower() != spec.y.sheet.lower()
        or spec.x.r1 != spec.y.r1
        and (spec.x.c1 == spec.y.c1)
    ):
        return None  # paired position by position (a lag, other sheets): no row range to name
    if not data.intended_y_range.lower().startswith(spec.y.sheet.lower() + "!"):
        return None
    first, last = used[0], used[-1]
    return (
        Ref(spec.x.sheet, first, spec.x.c1, last, spec.x.c2),
        Ref(spec.y.sheet, first, spec.y.c1, last, spec.y.c1),
    )


def _intended_across(spec: RegressionSpec, used: list[int]) -> tuple[Ref, Ref] | None:
    """The x and y rows over exactly the columns of the intended fit (a table in rows)."""
    if spec.x.sheet.lower() != spec.y.sheet.lower() or (spec.x.c1, spec.x.c2) != (
        spec.y.c1,
        spec.y.c2,
    ):
        return None
    first, last = used[0], used[-1]
    return (
        Ref(spec.x.sheet, spec.x.r1, first, spec.x.r1, last),
        Ref(spec.y.sheet, spec.y.r1, first, spec.y.r1, last),
    )


def _position(key: str, k: int, intercept: bool) -> tuple[int, int] | None:
    for row in range(1, 6):
        for col in range(1, k + 2):
            if linest_block_role(row, col, k, intercept) == key:
                return row, col
    return None


def corrected_formula(
    key: str, spec: RegressionSpec, data: Extracted, on_sheet: str, alpha: float = 0.05
) -> str | None:
    """The formula ``key`` (a statistic key, ``p_slope@E9`` allowed) should have, written on
    ``on_sheet``; None when no formula over a plain range gives it."""
    ranges = intended_ranges(spec, data)
    if ranges is None:
        return None
    x_ref, y_ref = ranges
    x = _local(x_ref.sheet, x_ref.c1, x_ref.r1, x_ref.c2, x_ref.r2, on_sheet)
    y = _local(y_ref.sheet, y_ref.c1, y_ref.r1, y_ref.c1, y_ref.r2, on_sheet)
    base = stat_base(key)
    k, intercept = spec.x_columns, spec.intercept
    if k == 1 and intercept and base in SIMPLE:
        return "=" + SIMPLE[base].format(x=x, y=y)
    block = f"LINEST({y},{x},{'TRUE' if intercept else 'FALSE'},TRUE)"
    if base in ("n",):
        return f"=COUNT({y})"
    name, _, index = base.partition("[")
    suffix = f"[{index}" if index else ""
    if name in ("t_slope", "t_intercept", "p_slope", "p_intercept"):
        coefficient = ("slope" if name.endswith("slope") else "intercept") + suffix
        at = _position(coefficient, k, intercept)
        if at is None:
            return None
        t = f"INDEX({block},1,{at[1]})/INDEX({block},2,{at[1]})"
        if name.startswith("t_"):
            return "=" + t
        return f"=T.DIST.2T(ABS({t}),INDEX({block},4,2))"
    if name in ("ci_slope_low", "ci_slope_high"):
        at = _position("slope" + suffix, k, intercept)
        if at is None:
            return None
        sign = "-" if name.endswith("low") else "+"
        return (
            f"=INDEX({block},1,{at[1]}){sign}T.INV.2T({alpha:g},INDEX({block},4,2))"
            f"*INDEX({block},2,{at[1]})"
        )
    at = _position(base, k, intercept)
    if at is None:
        return None
    return f"=INDEX({block},{at[0]},{at[1]})"
