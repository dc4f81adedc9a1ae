"""Broken regressions: a regression cell that shows an error value instead of a result.

A workbook whose only LINEST gives ``#VALUE!`` holds a regression all the same: the author
meant one, and a reviewer must hear what went wrong rather than "no regressions".
"""

from __future__ import annotations

from auditor.checks.base import check
from auditor.context import WorkbookContext
from auditor.design.formula_filter import CellLookup, may_hold
from auditor.formula.syntax import Call, Node, RefNode, calls
from auditor.model import Finding
from auditor.read.workbook import ErrorValue, Workbook

CHECK = "regression-cell-error"
REGRESSION_CALLS = frozenset(
    {"LINEST", "LOGEST", "SLOPE", "INTERCEPT", "STEYX", "RSQ", "TREND", "FORECAST"}
    | {"FORECAST.LINEAR"}
)


def _texts(workbook: Workbook, node: Node) -> list[str]:
    """Cells holding text inside the ranges a call reads (headers caught in the range)."""
    out: list[str] = []
    if not isinstance(node, RefNode):
        return out
    ref = node.ref
    sheet = workbook.sheet(ref.sheet)
    if sheet is None or ref.rows * ref.cols > 100_000:
        return out
    for (row, col), cell in sheet.cells.items():
        inside = ref.r1 <= row <= ref.r2 and ref.c1 <= col <= ref.c2
        if inside and isinstance(cell.value, str) and not cell.formula:
            out.append(cell.address)
    return sorted(out, key=lambda a: (len(a), a))


def _why(workbook: Workbook, call: Call) -> str:
    args = call.args
    y = args[0] if args else None
    if call.name in ("LINEST", "LOGEST", "TREND") and isinstance(y, RefNode):
        missing_x = len(args) < 2 or not isinstance(args[1], RefNode)
        if missing_x and y.ref.rows > 1 and y.ref.cols > 1:
            return (
                f"known_y ({y.ref.address}) spans {y.ref.cols} columns and no known_x is "
                f"given: {call.name} needs y in one column (or row) and the x values as its "
                "second argument"
            )
    texts = [t for arg in args[:3] for t in _texts(workbook, arg)]
    if texts:
        shown = ", ".join(texts[:4]) + (" …" if len(texts) > 4 else "")
        what = "every cell" if call.name in ("LINEST", "LOGEST", "TREND") else "the pairs"
        return (
            f"the ranges take in text ({shown}: headers or notes), and {call.name} needs "
            f"{what} numeric"
        )
    refs = [a.ref for a in args[:2] if isinstance(a, RefNode)]
    if len(refs) == 2 and refs[0].rows * refs[0].cols != refs[1].rows * refs[1].cols:
        return f"y has {refs[0].rows * refs[0].cols} cells and x {refs[1].rows * refs[1].cols}"
    return ""


def _names_a_regression_call(text: str) -> bool:
    """Whether a formula's text can call a regression function (a superset: the name anywhere,
    in any case; auditor.design.formula_filter)."""
    upper = text.upper()
    return any(name in upper for name in REGRESSION_CALLS)


@check(
    CHECK,
    "A regression formula shows an error value instead of a result, and why.",
    scope="workbook",
)
def regression_cell_error(context: WorkbookContext) -> list[Finding]:
    """A LINEST, SLOPE or TREND cell whose stored value is an error is a regression that failed.

    Failing: ``=LINEST(A1:B18)`` — headers included and no x — shows ``#VALUE!``.
    Passing: ``=LINEST(B2:B18,A2:A18)`` shows the slope.
    """
    workbook = context.workbook
    if workbook is None or not context.stored_values:
        return []
    findings = []
    cell_at = CellLookup(workbook)
    may_call = may_hold(workbook, _names_a_regression_call)
    for (sheet, row, col), node in context.parsed.items():
        cell = cell_at(sheet, row, col)
        if cell is None or not isinstance(cell.value, ErrorValue):
            continue
        if cell.formula is not None and not may_call(cell.formula):
            continue  # no regression function in its text or its names: no tree to walk
        failed = [c for c in calls(node) if c.name in REGRESSION_CALLS]
        if not failed:
            continue
        why = _why(workbook, failed[0])
        findings.append(
            Finding(
                check=CHECK,
                kind="regression-error",
                severity="major",
                cells=[cell.address],
                message=(
                    f"{cell.address} ({cell.formula}) shows {cell.value.code} instead of a "
                    f"result: {why or 'the function fails on the ranges it reads'}."
                ),
                evidence={"formula": cell.formula or "", "shows": cell.value.code},
                fix=f"Give {failed[0].name} numeric ranges of equal length: y first, then x, "
                "without header rows.",
            )
        )
    return findings
