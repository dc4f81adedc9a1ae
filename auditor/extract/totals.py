"""Evidence about the rows of a data table: which row is a total or summary row rather than an
observation, and which rows below a range continue it (so that the range was meant to grow).

Coincidence is not evidence (design, "Evidence before alarm"): a y value that happens to equal
the sum or the mean of the values above it is common in real data (y proportional to x, rounded
returns). The evidence a reviewer accepts is a word in the row's label cell (checked by the
caller), a formula that sums or averages the rows above, or a format unlike the rows above.
"""

from __future__ import annotations

from auditor.errors import FormulaError
from auditor.formula.r1c1 import to_r1c1
from auditor.formula.syntax import Call, parse, references
from auditor.locate.spec import RegressionSpec
from auditor.read.workbook import Workbook

# Functions that summarise a column: a cell computing one of these over the rows above it is a
# summary row, whatever its label says.
SUMMARY_FUNCTIONS = frozenset(
    {"SUM", "AVERAGE", "MEDIAN", "SUBTOTAL", "AGGREGATE", "AVERAGEA", "GEOMEAN", "HARMEAN"}
)


def summary_formula(
    workbook: Workbook, sheet: str, row: int, col: int, *, across: bool = False
) -> bool:
    """The cell at (row, col) holds =SUM(…)/AVERAGE(…)/… over cells above it in its column
    (``across``: over cells to its left in its row, a table laid out in rows)."""
    found = workbook.sheet(sheet)
    cell = found.get(row, col) if found is not None else None
    if cell is None or not cell.formula:
        return False
    try:
        node = parse(cell.formula, found.name if found is not None else sheet, workbook)
    except FormulaError:
        return False
    if not (isinstance(node, Call) and node.name.removeprefix("_xlfn.") in SUMMARY_FUNCTIONS):
        return False
    if across:
        return any(
            ref.r1 <= row <= ref.r2 and ref.c2 < col and ref.c2 > ref.c1 for ref in references(node)
        )
    return any(
        ref.c1 <= col <= ref.c2 and ref.r2 < row and ref.r2 > ref.r1 for ref in references(node)
    )


def format_changes(
    workbook: Workbook, sheet: str, row: int, col: int, *, across: bool = False
) -> bool:
    """The cell's number format differs from that of the nearest filled cell above it (to its
    left with ``across``)."""
    found = workbook.sheet(sheet)
    if found is None:
        return False
    cell = found.get(row, col)
    start = col if across else row
    for before in range(start - 1, max(0, start - 4), -1):
        other = found.get(row, before) if across else found.get(before, col)
        if other is not None and other.value is not None:
            mine = (cell.number_format if cell is not None else "") or "General"
            return mine != (other.number_format or "General")
    return False


def continues_pattern(
    workbook: Workbook, lines: list[tuple[str, int]], at: int, then: int, across: bool = False
) -> bool:
    """Row ``then`` is made like row ``at`` in every column of ``lines`` ((sheet, column)
    pairs): typed numbers under typed numbers, or the same formula copied down (the same text in
    relative R1C1 form). ``across``: data in rows, so ``lines`` are (sheet, row) pairs and
    ``at`` and ``then`` columns (the same formula copied across)."""
    for sheet_name, line in lines:
        sheet = workbook.sheet(sheet_name)
        if sheet is None:
            return False
        first, second = ((line, at), (line, then)) if across else ((at, line), (then, line))
        one, two = sheet.get(*first), sheet.get(*second)
        one_formula = one.formula if one is not None else None
        two_formula = two.formula if two is not None else None
        if bool(one_formula) != bool(two_formula):
            return False
        if one_formula and two_formula:
            if to_r1c1(one_formula, *first) != to_r1c1(two_formula, *second):
                return False
    return True


def claimed_elsewhere(spec: RegressionSpec, row: int) -> bool:
    """Another regression's own range holds ``row`` in one of this regression's columns."""
    for other in spec.neighbour_ranges:
        if other.r1 <= row <= other.r2 and other.sheet.lower() == spec.y.sheet.lower():
            for mine in (spec.x, spec.y):
                if mine.sheet.lower() == other.sheet.lower() and (
                    other.c1 <= mine.c2 and mine.c1 <= other.c2
                ):
                    return True
    return False
