"""Formula checks: the statistics of one regression should all use the same x and y ranges, and
each call should pair x and y from the same rows."""

from __future__ import annotations

from auditor.checks.base import check
from auditor.checks.formula_support import (
    local_text,
    parse_quietly,
    reached_cells,
    severity_in_regression,
)
from auditor.context import RegressionContext
from auditor.formula.syntax import Node, Ref, RefNode, calls
from auditor.locate.locator import PairUse
from auditor.locate.spec import overlaps
from auditor.model import Finding, Severity


def shift(used: Ref, meant: Ref) -> tuple[int, int] | None:
    """(rows, columns) by which ``used`` is ``meant`` moved, when it is the same block moved a
    little: some rows up or down (still overlapping) or one column across. None otherwise."""
    if used.sheet.lower() != meant.sheet.lower() or (used.rows, used.cols) != (
        meant.rows,
        meant.cols,
    ):
        return None
    rows, cols = used.r1 - meant.r1, used.c1 - meant.c1
    if cols == 0 and 0 < abs(rows) < meant.rows:
        return rows, 0
    if rows == 0 and abs(cols) == 1:
        return 0, cols
    return None


def _moved(rows: int, cols: int) -> str:
    if cols:
        return f"one column to the {'right' if cols > 0 else 'left'}"
    return f"{abs(rows)} row(s) {'down' if rows > 0 else 'up'}"


def _classify(use: PairUse, x: Ref, y: Ref) -> tuple[str, str] | None:
    """(kind, what is wrong) for a call whose ranges differ from the regression's; None when
    the difference changes nothing (CORREL's arguments in either order)."""
    symmetric = use.function in ("CORREL", "PEARSON", "RSQ")
    swapped = overlaps(use.x, y) and overlaps(use.y, x)
    if swapped and symmetric:
        return None
    if swapped:
        return "xy-swapped", "has x and y swapped"
    x_move, y_move = shift(use.x, x), shift(use.y, y)
    if (use.x == x or x_move) and (use.y == y or y_move) and (x_move or y_move):
        said = [
            f"its {name} range is moved {_moved(*move)}"
            for name, move in (("x", x_move), ("y", y_move))
            if move
        ]
        return "range-shifted", " and ".join(said)
    if not (overlaps(use.x, x) and overlaps(use.y, y)):
        return "copied-block", "names the data of another block"
    return "range-mismatch", "uses other ranges"


@check("ranges-disagree", "The statistics of one regression use different x or y ranges.")
def ranges_disagree(context: RegressionContext) -> list[Finding]:
    """Every SLOPE/INTERCEPT/STEYX/RSQ/LINEST call of a regression should name the same ranges.

    Failing: ``=SLOPE(B4:B15,A4:A15)`` beside ``=STEYX(B4:B13,A4:A13)`` (one range not extended:
    range-mismatch), ``=STEYX(B5:B16,A5:A16)`` (moved a row: range-shifted),
    ``=SLOPE(A4:A13,B4:B13)`` (x and y swapped), or a block copied across whose STEYX still names
    the first block's columns (``$E$3:$E$12``: copied-block).
    Also ``=COUNT(A4:A15)-2`` for df beside ranges that run to row 17 (range-mismatch): every
    statistic, not only the pair functions, must read the regression's x and y ranges.
    Passing: all calls name A4:A15 and B4:B15.
    """
    spec = context.spec
    findings = _other_readers(context)
    for use in spec.uses:
        if use.x == spec.x and use.y == spec.y:
            continue
        classified = _classify(use, spec.x, spec.y)
        if classified is None:
            continue
        kind, what = classified
        severity: Severity = severity_in_regression(context, reached_cells(spec, use.cell.address))
        x, y = (local_text(r.address, use.cell.sheet) for r in (spec.x, spec.y))
        findings.append(
            Finding(
                check="ranges-disagree",
                kind=kind,
                severity=severity,
                cells=[use.cell.address],
                message=(
                    f"{use.function} in {use.cell.address} {what}: y = {use.y.address}, "
                    f"x = {use.x.address}, while the regression uses y = {spec.y.address}, "
                    f"x = {spec.x.address}."
                ),
                evidence={"function": use.function, "y": use.y.address, "x": use.x.address},
                fix=f"Make {use.cell.address} use y = {y} and x = {x} "
                "(relative references, so the block copies correctly).",
            )
        )
    return findings


def _other_readers(context: RegressionContext) -> list[Finding]:
    """Statistic cells built by hand (COUNT, DEVSQ, AVERAGE, STDEV over the data) whose range
    over the x or y column differs from the regression's."""
    spec = context.spec
    pair_cells = {u.cell.address for u in spec.uses}
    findings = []
    for stat in spec.stats.values():
        cell = stat.cell
        if cell.address in pair_cells or stat.how == "linest-block":
            continue
        if ":" not in (cell.formula or ""):
            continue  # no range of two cells or more (A1:A9, A:A): no column read, no parse
        node = parse_quietly(cell.formula, cell.sheet)
        if node is None:
            continue
        for call, used, meant, axis in _column_readers(node, spec.x, spec.y):
            moved = shift(used, meant)
            kind = "range-shifted" if moved else "range-mismatch"
            moved_text = f" (the same range moved {_moved(*moved)})" if moved else ""
            findings.append(
                Finding(
                    check="ranges-disagree",
                    kind=kind,
                    severity=severity_in_regression(context, reached_cells(spec, cell.address)),
                    cells=[cell.address],
                    message=(
                        f"{call} in {cell.address} reads {used.address}, while the regression's "
                        f"{axis} range is {meant.address}{moved_text}."
                    ),
                    evidence={"function": call, "used": used.address, axis: meant.address},
                    fix=f"Use {local_text(meant.address, cell.sheet)} in {cell.address}, as "
                    "the other statistics do.",
                )
            )
            break  # one finding a cell: the fix is the same for every range in it
    return findings


def _column_readers(node: Node, x: Ref, y: Ref) -> list[tuple[str, Ref, Ref, str]]:
    """(function, range used, range meant, "x" or "y") for each call argument that reads part of
    the x or y column over other rows."""
    found = []
    for call in calls(node):
        for arg in call.args:
            if not isinstance(arg, RefNode) or arg.ref.whole_column or arg.ref.rows < 2:
                continue
            used = arg.ref
            for meant, axis in ((x, "x"), (y, "y")):
                if (
                    used.sheet.lower() == meant.sheet.lower()
                    and (used.c1, used.c2) == (meant.c1, meant.c2)
                    and (used.r1, used.r2) != (meant.r1, meant.r2)
                    and used.r1 <= meant.r2
                    and meant.r1 <= used.r2
                    and not meant.whole_column
                ):
                    found.append((call.name, used, meant, axis))
    return found


@check(
    "xy-rows-misaligned",
    "The x and y ranges start on different rows, so each x is paired with another row's y.",
)
def xy_rows_misaligned(context: RegressionContext) -> list[Finding]:
    """SLOPE-family functions pair the i-th cell of y with the i-th cell of x, whatever rows
    they sit on: two ranges of one table that start on different rows mispair every point.

    Failing: ``=SLOPE(B5:B16,A4:A15)`` (y moved one row down against x).
    Passing: ``=SLOPE(B4:B15,A4:A15)``; or x and y from different sheets or tables on purpose
    (``=SLOPE('Run 2'!C2:C13,'Run 1'!B2:B13)`` is not judged); or one column against itself a
    row apart (``=SLOPE(A3:A101,A2:A100)``, a lag-1 autoregression).
    """
    spec = context.spec
    x, y = spec.x, spec.y
    if x.sheet.lower() != y.sheet.lower() or x.rows != y.rows or x.r1 == y.r1:
        return []
    if (x.c1, x.c2) == (y.c1, y.c2):
        return []  # one column against itself, rows apart: a lag, by design
    if not (x.r1 <= y.r2 and y.r1 <= x.r2) or x.rows < 3:
        return []  # separate tables side by side, not one table read crooked
    uses = [u for u in spec.uses if u.x == x and u.y == y]
    cells = list(dict.fromkeys(u.cell.address for u in uses))
    reached = list(dict.fromkeys(c for cell in cells for c in reached_cells(spec, cell)))
    offset = y.r1 - x.r1
    fixed_y = Ref(y.sheet, x.r1, y.c1, x.r2, y.c2)
    home = uses[0].cell.sheet if uses else y.sheet
    return [
        Finding(
            check="xy-rows-misaligned",
            kind="range-shifted",
            severity=severity_in_regression(context, reached) if reached else "major",
            cells=cells + [c for c in reached if c not in cells],
            message=(
                f"The formulas pair x in rows {x.r1}–{x.r2} ({x.address}) with y in rows "
                f"{y.r1}–{y.r2} ({y.address}): each x value is paired with the y value "
                f"{abs(offset)} row(s) {'below' if offset > 0 else 'above'} it."
            ),
            evidence={"x": x.address, "y": y.address, "row_offset": offset},
            fix=f"Use y = {local_text(fixed_y.address, home)} with x = "
            f"{local_text(x.address, home)} (the same rows).",
        )
    ]
