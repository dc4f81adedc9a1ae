"""The statistic label of a cell in a grid of regressions, across its neighbours' cells.

A results sheet often holds several regressions side by side: statistics in rows with their
labels in the first column and one regression per column, or the other way round (statistics in
columns under labels in the first row, one regression per row). Only the first regression's
cells touch their labels; a later column's SE sits behind the earlier columns' SE cells. Its
label is the text that starts the run of formula cells it belongs to: walking left along its row
(or up its column) over the neighbours' formulas, the first text met. A typed number on the way
ends the search: a row of readings behind a sample ID is a data table, not a grid.

A run broken by an empty cell, or a text that names no statistic, gives no label: the words must
say which statistic the row (or column) holds.
"""

from __future__ import annotations

from auditor.locate.roles import role_from_label
from auditor.locate.spec import label_for
from auditor.read.workbook import Cell, Workbook

MAX_GRID_RUN = 40  # regressions side by side a grid label is followed across
LABEL_LINE = 8  # labels either side of a grid label read to see that they name statistics


def _run_start(workbook: Workbook, cell: Cell, step: tuple[int, int]) -> Cell | None:
    """The text cell at the start of the run of formula cells that ``cell`` ends."""
    sheet = workbook.sheet(cell.sheet)
    if sheet is None:
        return None
    row, col = cell.row, cell.col
    for _ in range(MAX_GRID_RUN):
        row, col = row + step[0], col + step[1]
        if row < 1 or col < 1:
            return None
        other = sheet.get(row, col)
        if other is None or other.value is None and other.formula is None:
            return None  # the run is broken: no grid here
        if isinstance(other.value, str) and not other.formula:
            return other
        if not other.formula:
            return None  # a typed number: a data table (sample IDs, readings), not a grid
    return None


def _names_several_statistics(workbook: Workbook, label: Cell, step: tuple[int, int]) -> bool:
    """The line of labels ``label`` belongs to (its column when the run went along a row, its
    row when it went up a column) names at least two different statistics: a grid's labels,
    not a column of sample or site names that happen to read like one ("S-2")."""
    sheet = workbook.sheet(label.sheet)
    if sheet is None:
        return False
    roles = set()
    for offset in range(-LABEL_LINE, LABEL_LINE + 1):
        row, col = (
            (label.row + offset, label.col) if step[0] == 0 else (label.row, label.col + offset)
        )
        value = sheet.value(row, col) if row >= 1 and col >= 1 else None
        role = role_from_label(value) if isinstance(value, str) else None
        if role:
            roles.add(role)
    return len(roles) >= 2


def grid_label(workbook: Workbook, cell: Cell) -> str | None:
    """The statistic label of ``cell`` at the start of its row or the top of its column, when
    that text names a statistic (None otherwise): with A3 'Standard error of the slope',
    B3 ``=STEYX(…)/SQRT(DEVSQ(…))`` and C3 ``=STDEV(…)/SQRT(DEVSQ(…))``, C3's label is A3's."""
    for step in ((0, -1), (-1, 0)):
        label = _run_start(workbook, cell, step)
        if label is None or not isinstance(label.value, str) or not role_from_label(label.value):
            continue
        if _names_several_statistics(workbook, label, step):
            return label.value
    return None


def statistic_label(workbook: Workbook, cell: Cell) -> str | None:
    """The words beside a cell (:func:`label_for`) when they name a statistic, else its grid
    label, else the words beside it whatever they say."""
    beside = label_for(workbook, cell)
    if beside and role_from_label(beside):
        return beside
    return grid_label(workbook, cell) or beside
