"""Which block of cells a value belongs to: the cells joined to it by filled neighbours.

A sheet often holds several blocks side by side (a formula block per instrument, a table pasted
by an analysis add-in): a label and its number belong to the block they touch, not to every
regression near them. A statistics list also tells what a bare label means: "Standard Error"
among "R Square" and "Observations" is the standard error of the regression (the residual SD),
not the slope's.
"""

from __future__ import annotations

from collections import deque

from auditor.locate.roles import role_from_label
from auditor.read.workbook import Sheet

# Roles that describe the whole fit; a list made of these is a statistics list of the fit.
FIT_LEVEL_ROLES = frozenset({"r_squared", "r", "n", "residual_sd", "df", "f"})
COEFFICIENT_ROLES = frozenset({"slope", "intercept", "t_slope", "t_intercept"})
REACH = 12  # rows and columns a block is followed from its start (blocks are small)


def _filled(sheet: Sheet, row: int, col: int) -> bool:
    cell = sheet.get(row, col)
    return cell is not None and (cell.formula is not None or cell.value not in (None, ""))


def same_block(sheet: Sheet, start: tuple[int, int], targets: set[tuple[int, int]]) -> bool:
    """``start`` reaches one of ``targets`` through filled cells (up, down, left, right), within
    REACH rows and columns of ``start``."""
    if not targets:
        return True
    if start in targets:
        return True
    seen = {start}
    queue = deque([start])
    while queue:
        row, col = queue.popleft()
        for step in ((1, 0), (-1, 0), (0, 1), (0, -1)):
            nxt = (row + step[0], col + step[1])
            if nxt in seen or nxt[0] < 1 or nxt[1] < 1:
                continue
            if abs(nxt[0] - start[0]) > REACH or abs(nxt[1] - start[1]) > REACH:
                continue
            if nxt in targets:
                return True
            if _filled(sheet, *nxt):
                seen.add(nxt)
                queue.append(nxt)
    return False


def role_in_list(sheet: Sheet, label_row: int, label_col: int, role: str) -> str:
    """A bare "Standard Error" (read as the slope's SE) in a list of fit-level statistics is the
    standard error of the regression: the residual SD."""
    label = sheet.get(label_row, label_col)
    text = label.value if label is not None and isinstance(label.value, str) else ""
    words = " ".join(text.lower().replace(".", " ").split())
    if role != "se_slope" or words not in ("standard error", "std error", "se", "s e", "std err"):
        return role
    neighbours = []
    for row in range(max(1, label_row - 5), label_row + 6):
        if row == label_row:
            continue
        other = sheet.get(row, label_col)
        if other is not None and isinstance(other.value, str):
            found = role_from_label(other.value)
            if found:
                neighbours.append(found)
    if any(r in FIT_LEVEL_ROLES for r in neighbours) and not any(
        r in COEFFICIENT_ROLES for r in neighbours
    ):
        return "residual_sd"
    return role
