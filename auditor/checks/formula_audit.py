"""Formula audit of one regression, independent of the numbers: counts typed into formulas, and
ranges that run past the data table.

Both are faults that can hide behind a correct number today: ``TDIST(t, 12, 2)`` is right until
two rows are added, a range that reaches into blank rows is harmless until someone types a total
there. Severity follows the reported values the fault reaches (:mod:`formula_support`).
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import chain

import numpy as np

from auditor.checks.base import check
from auditor.checks.formula_support import (
    local_text,
    may_hold_number,
    parse_quietly,
    reached_cells,
    replace_argument,
    severity_in_regression,
)
from auditor.context import RegressionContext
from auditor.formula.syntax import Binary, Call, Node, Number, Ref, Unary
from auditor.grid import column_letter
from auditor.model import DataPoint, Finding, stat_base
from auditor.wording import fmt, rows_text

# Which argument of each distribution function is the residual degrees of freedom (0-based).
DF_ARGUMENT = {
    "TDIST": 1,
    "T.DIST": 1,
    "T.DIST.2T": 1,
    "T.DIST.RT": 1,
    "T.INV": 1,
    "T.INV.2T": 1,
    "TINV": 1,
    "FDIST": 2,
    "F.DIST": 2,
    "F.DIST.RT": 2,
    "F.INV": 2,
    "F.INV.RT": 2,
    "FINV": 2,
}
COUNT_KEYS = ("df", "n")


def constant_value(node: Node) -> float | None:
    """The value of a sub-formula built only of typed numbers (``12-2``), else None."""
    if isinstance(node, Number):
        return float(node.value)
    if isinstance(node, Unary):
        inner = constant_value(node.operand)
        return None if inner is None else (-inner if node.op == "-" else inner)
    if isinstance(node, Binary) and node.op in "+-*/":
        left, right = constant_value(node.left), constant_value(node.right)
        if left is None or right is None or (node.op == "/" and right == 0):
            return None
        return {"+": left + right, "-": left - right, "*": left * right}.get(
            node.op, left / right if right else 0.0
        )
    return None


@dataclass(frozen=True)
class TypedCount:
    what: str  # "df" or "n"
    typed: float
    function: str | None  # the call whose argument it is, None for the whole cell


def typed_counts(key: str, node: Node) -> list[TypedCount]:
    """Counts typed where the data's own count belongs, in the formula of statistic ``key``."""
    found: list[TypedCount] = []
    whole = constant_value(node)
    if stat_base(key) in COUNT_KEYS and whole is not None:
        return [TypedCount(stat_base(key), whole, None)]
    stack = [node]
    while stack:
        current = stack.pop()
        if isinstance(current, Call):
            position = DF_ARGUMENT.get(current.name)
            if position is not None and len(current.args) > position:
                value = constant_value(current.args[position])
                if value is not None:
                    found.append(TypedCount("df", value, current.name))
            stack.extend(current.args)
        elif isinstance(current, Binary):
            # 1/10 under the square root of an intercept's SE is a typed n.
            if current.op == "/" and constant_value(current.left) == 1.0:
                value = constant_value(current.right)
                if value is not None and value >= 3 and value == int(value):
                    found.append(TypedCount("n", value, None))
            stack.extend((current.left, current.right))
        elif isinstance(current, Unary):
            stack.append(current.operand)
    return found


def _count_source(context: RegressionContext, what: str, on_sheet: str) -> str:
    """A formula piece that computes the count from the data: the block's own cell if it has
    one, else COUNT over the x range."""
    stat = context.spec.stats.get(what)
    if stat is not None and stat.cell.formula:
        return local_text(stat.cell.address, on_sheet)
    x = local_text(context.spec.x.address, on_sheet)
    if what == "n":
        return f"COUNT({x})"
    return f"COUNT({x})-{context.fit.n - context.fit.df}"


@check(
    "typed-count-in-formula",
    "A count or degrees of freedom is typed into a formula instead of computed from the data.",
)
def typed_count_in_formula(context: RegressionContext) -> list[Finding]:
    """Degrees of freedom or n typed as numbers go stale as soon as rows are added or removed.

    Failing: ``E12 =T.DIST.2T(ABS(E11),10)`` while the 14 points give df = 12 (major; critical
    when the p-value then falls on the other side of alpha); ``=TDIST(ABS(E11),8,2)`` with
    df = 8 is still right today (minor).
    Passing: ``=T.DIST.2T(ABS(E11),E9)`` with ``E9 =COUNT(A4:A17)-2``.
    """
    fit = context.fit
    if fit.n == 0:
        return []
    truth = {"df": fit.df, "n": fit.n}
    findings = []
    for key, stat in context.spec.stats.items():
        cell = stat.cell
        if stat.how == "linest-block" or not cell.formula or not may_hold_number(cell.formula):
            continue  # a count typed in a formula is a typed number: none, nothing to parse
        node = parse_quietly(cell.formula, cell.sheet)
        if node is None:
            continue
        for typed in typed_counts(key, node):
            actual = truth[typed.what]
            still_right = typed.typed == actual
            reached = reached_cells(context.spec, cell.address)
            severity = "minor" if still_right else severity_in_regression(context, reached)
            if not still_right and severity == "minor":
                severity = "major"  # a wrong count is a wrong value, seen or not
            source = _count_source(context, typed.what, cell.sheet)
            fixed = None
            if typed.function is not None and cell.formula:
                fixed = replace_argument(
                    cell.formula, typed.function, DF_ARGUMENT[typed.function], source
                )
            elif stat_base(key) == typed.what:
                x = local_text(context.spec.x.address, cell.sheet)
                extra = "" if typed.what == "n" else f"-{fit.n - fit.df}"
                fixed = f"=COUNT({x}){extra}"
            what = "degrees of freedom" if typed.what == "df" else "number of points"
            now = (
                "which is still right, but will not follow the data when rows are added or removed"
                if still_right
                else f"but the {fit.n} points of {context.data.intended_y_range} give "
                f"{typed.what} = {actual}"
            )
            findings.append(
                Finding(
                    check="typed-count-in-formula",
                    kind="hardcoded-constant",
                    severity=severity,
                    cells=[cell.address] + [c for c in reached if c != cell.address],
                    message=(
                        f"{cell.address} has the {what} typed as {fmt(typed.typed)} in "
                        f"{cell.formula}, {now}."
                    ),
                    evidence={
                        "typed": typed.typed,
                        "computed": actual,
                        "count": typed.what,
                        "function": typed.function or "",
                    },
                    fix=f"Compute it from the data: {fixed}"
                    if fixed
                    else f"Replace the typed {fmt(typed.typed)} by {source}.",
                )
            )
    return findings


def _cut(ref: Ref, first: int, last: int) -> str:
    return (
        f"{ref.sheet}!{column_letter(ref.c1)}{first}:{column_letter(ref.c2)}{last}"
        if first <= last
        else ref.address
    )


@dataclass(frozen=True)
class OffTable:
    """Where a regression's data table is, and the rows its ranges take in beyond it."""

    first: int  # the table's first row (its used points and total rows)
    last: int
    outside: list[int]  # rows of both ranges off the table that no used point holds, in order
    by_row: dict[int, DataPoint]  # the points off the table, by row


def off_table(context: RegressionContext) -> OffTable | None:
    """The table's rows and the rows the ranges take in beyond it; None when there is no table
    or x and y are on different sheets. Rows past the sheet's last used row are not in the
    table's points: they are blank."""
    spec, data = context.spec, context.data
    index = context.point_rows()
    # The used points and any total rows (most tables have none: nothing to look up).
    table = index.rows[
        index.used | np.isin(index.rows, data.total_rows) if data.total_rows else index.used
    ]
    if not table.size or spec.x.sheet.lower() != spec.y.sheet.lower():
        return None
    first, last = int(table.min()), int(table.max())
    # Only the points off the table are asked for by row (every used point is on it).
    beyond = np.flatnonzero((index.rows < first) | (index.rows > last)).tolist()
    by_row = {data.points[i].row: data.points[i] for i in beyond}
    low, high = max(spec.x.r1, spec.y.r1), min(spec.x.r2, spec.y.r2)
    before, after = range(low, min(high, first - 1) + 1), range(max(low, last + 1), high + 1)
    outside = [r for r in chain(before, after) if r not in by_row or not by_row[r].used]
    return OffTable(first, last, outside, by_row)


@check(
    "range-beyond-table",
    "A range runs past the data table into blank or text rows, or takes whole columns.",
)
def range_beyond_table(context: RegressionContext) -> list[Finding]:
    """Rows outside the table inside a range are skipped today by SLOPE-family functions, but a
    number typed there later (a total, a note) is fitted as a point; LINEST fails on them.

    Failing: the table is A4:B17 but ``=SLOPE(B4:B40,A4:A40)`` (23 blank rows), or
    ``=SLOPE(B:B,A:A)`` (the header row and everything below the table).
    Passing: ``=SLOPE(B4:B17,A4:A17)``; a total row inside the range is total-row-in-range's.
    """
    spec = context.spec
    table = off_table(context)
    if table is None:
        return []
    first, last, outside, by_row = table.first, table.last, table.outside, table.by_row
    whole = any(r.whole_column for r in (spec.x, spec.y))
    if spec.found_by == "hand-built":
        # A covariance over a variance: rows with an x but a text y are in the variance, not
        # skipped; diagnosed as rows-differ where they change the slope.
        outside = [r for r in outside if not (r in by_row and by_row[r].x[:1] != [None])]
    if not outside and not whole:
        return []
    blank = [r for r in outside if r not in by_row or by_row[r].reason == "empty"]
    blank_rows = set(blank)
    text = [r for r in outside if r not in blank_rows]
    uses = [u for u in spec.uses if u.x == spec.x and u.y == spec.y] or spec.uses
    cells = list(dict.fromkeys(u.cell.address for u in uses))
    reached = [c for cell in cells for c in reached_cells(spec, cell)]
    linest = any(u.function == "LINEST" for u in uses)
    severity = severity_in_regression(context, reached)
    if linest and severity == "minor":
        severity = "major"  # LINEST gives an error value over blank or text cells
    parts = []
    if text:
        parts.append(f"{rows_text(text)} with text (a header or note)")
    if blank:
        parts.append(f"{len(blank)} blank row(s) ({rows_text(blank)})")
    taken = " and ".join(parts) if parts else "every row the table may grow into"
    reach = "whole columns" if whole else f"{spec.y.address} and {spec.x.address}"
    return [
        Finding(
            check="range-beyond-table",
            kind="range-long",
            severity=severity,
            cells=cells + [c for c in reached if c not in cells],
            message=(
                f"The formulas use {reach}, but the data table is rows {first}–{last}: the "
                f"ranges also take in {taken}. SLOPE-family functions skip such cells today; a "
                "number typed there later is fitted as a point"
                + (", and LINEST returns an error over them." if linest else ".")
            ),
            evidence={"table_first_row": first, "table_last_row": last, "blank": len(blank)},
            fix=f"End the ranges at the table: {_cut(spec.y, first, last)} and "
            f"{_cut(spec.x, first, last)} (or use a table so the ranges grow with the data).",
        )
    ]
