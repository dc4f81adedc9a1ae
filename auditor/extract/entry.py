"""The data of a regression: as its formulas see it, and as the table the author meant.

*As written*: the cells the formulas reference, with SLOPE-family semantics (a pair with a text,
logical or empty cell is skipped). *Intended*: the columns of the referenced ranges extended over
the contiguous data rows around them, numbers stored as text parsed, a trailing total or mean
row left out, header rows skipped. Every cell dropped or parsed is recorded with the reason.
"""

from itertools import chain
from typing import Any

import numpy as np

from auditor.evaluation.evaluator import Evaluator, Unsupported, Unverifiable
from auditor.extract.across import across
from auditor.extract.fallback import StoredFallback
from auditor.extract.intended import IntendedRows
from auditor.extract.pasted import pasted_points
from auditor.extract.record import Extracted, Reader, cell_number, range_text
from auditor.extract.tables import paired, series_table
from auditor.extract.totals import claimed_elsewhere, continues_pattern
from auditor.formula.syntax import Ref
from auditor.locate.locator import RegressionSpec
from auditor.model import DataPoint
from auditor.read.workbook import Workbook

MAX_GAP_SCAN = 1_048_576


def _column_values(evaluator: Reader, sheet: str, col: int, r1: int, r2: int) -> list[object]:
    if r2 < r1:
        return []  # a range past the sheet's last row (a damaged or empty sheet) holds nothing
    ref = Ref(sheet, r1, col, r2, col)
    values: list[object] = evaluator.range_values(ref)[:, 0].tolist()  # the cells' own objects
    return values


def _is_data_row(values: list[object]) -> bool:
    return all(cell_number(v)[0] is not None for v in values)


def extract(
    workbook: Workbook, evaluator: Evaluator, spec: RegressionSpec, *, cell_by_cell: bool = False
) -> Extracted:
    """The intended table of ``spec``. ``cell_by_cell=True`` classifies every row one cell at a
    time (slow on large tables): the reference the fast path is tested against. A data cell
    whose formula cannot be evaluated is read as stored (recorded in ``taken_as_stored``)."""
    if spec.found_by == "trendline":
        return series_table(spec)
    if spec.pasted is not None:
        # A pasted table's data are exactly the cells that reproduce it: no extension.
        pasted_x, pasted_y, pasted_rows, dropped = pasted_points(workbook, spec)
        return Extracted(
            x=pasted_x,
            y=pasted_y,
            points=pasted_rows,
            intended_x_range=spec.x.address,
            intended_y_range=spec.y.address,
            dropped=dropped,
            n_as_written=len(pasted_y),
        )
    try:
        return _extract(workbook, evaluator, spec, cell_by_cell=cell_by_cell)
    except Unverifiable:
        raise
    except Unsupported:
        reader = StoredFallback(evaluator, workbook)
        result = _extract(workbook, reader, spec, cell_by_cell=cell_by_cell)
        result.taken_as_stored = list(dict.fromkeys(reader.taken_as_stored))
        return result


def _extract(
    workbook: Workbook, evaluator: Reader, spec: RegressionSpec, *, cell_by_cell: bool = False
) -> Extracted:
    x_ref, y_ref = spec.x, spec.y
    if spec.in_rows:
        return across(workbook, evaluator, spec)
    k = x_ref.c2 - x_ref.c1 + 1
    x_cols = list(range(x_ref.c1, x_ref.c2 + 1))
    same_frame = x_ref.sheet.lower() == y_ref.sheet.lower()
    # The rows both ranges span: a range, tested in O(1) (no set of 200,000 rows built twice).
    rows_referenced = range(max(x_ref.r1, y_ref.r1), min(x_ref.r2, y_ref.r2) + 1)
    first, last = min(x_ref.r1, y_ref.r1), max(x_ref.r2, y_ref.r2)
    lagged = same_frame and (x_ref.c1, x_ref.c2) == (y_ref.c1, y_ref.c1) and x_ref.r1 != y_ref.r1
    if (
        not same_frame
        or (x_ref.r2 - x_ref.r1) != (y_ref.r2 - y_ref.r1)
        and not rows_referenced
        or lagged
    ):
        # Different sheets, unrelated rows, or one column against itself rows apart (a lag):
        # take the ranges as they are, position by position.
        return paired(workbook, evaluator, spec)
    sheet = workbook.sheet(y_ref.sheet)
    max_row = sheet.max_row if sheet is not None else last
    last = min(last, max_row)

    def row_values(r: int) -> list[Any]:
        return [evaluator.cell_value(x_ref.sheet, r, c) for c in x_cols] + [
            evaluator.cell_value(y_ref.sheet, r, y_ref.c1)
        ]

    # Extend over rows added below a fixed range (the common case), only while they continue
    # its pattern and belong to no other regression: the author's ranges define a regression.
    columns = [(x_ref.sheet, c) for c in x_cols] + [(y_ref.sheet, y_ref.c1)]
    while (
        last < max_row
        and _is_data_row(row_values(last + 1))
        and continues_pattern(workbook, columns, last, last + 1)
        and not claimed_elsewhere(spec, last + 1)
    ):
        last += 1
    x_block = (
        np.array(
            [_column_values(evaluator, x_ref.sheet, c, first, last) for c in x_cols], dtype=object
        ).T
        if last >= first
        else np.empty((0, k), dtype=object)
    )
    y_column = _column_values(evaluator, y_ref.sheet, y_ref.c1, first, last)
    points: list[DataPoint] = []
    result = Extracted(
        x=np.empty((0, k)),
        y=np.empty(0),
        points=points,
        intended_x_range=range_text(x_ref.sheet, x_ref.c1, first, x_ref.c2, last),
        intended_y_range=range_text(y_ref.sheet, y_ref.c1, first, y_ref.c1, last),
    )
    rows = IntendedRows(
        workbook, y_ref.sheet, x_cols, y_ref.c1, rows_referenced, result, cell_by_cell=cell_by_cell
    )
    # A DataPoint and an x list per row (no cycles among them): the audit runs with the cycle
    # collector held back (pipeline.audit.audit_workbook), which would otherwise walk every
    # object alive again and again while 200,000 of them are made.
    rows.add_all(first, last, x_block, y_column)
    # Every x kept is a float already: read in one pass, not as a list of one-row lists.
    kept_x = chain.from_iterable(rows.xs_used)
    result.x = np.fromiter(kept_x, dtype=float, count=len(rows.xs_used) * k).reshape(-1, k)
    result.y = np.array(rows.ys_used, dtype=float)
    return result
