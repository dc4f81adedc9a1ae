"""The intended-data extraction: the fast path for rows of plain numbers against the per-cell
classification, on a generated table holding every kind of cell the per-cell path handles.

The expected notes and counts are worked out by hand from the table below, not from the code.
"""

from __future__ import annotations

import random

import numpy as np

from auditor.evaluation.evaluator import Evaluator
from auditor.extract.entry import extract
from auditor.extract.record import Extracted
from auditor.formula.syntax import Ref
from auditor.locate.locator import RegressionSpec
from auditor.read.workbook import Cell, CellValue, ErrorValue, Sheet, Workbook

LAST_DATA_ROW = 401  # rows 2..401 hold data; row 402 is a labelled mean row
SUBTOTAL_ROW = 200  # labelled "Total" though its y is not the sum above: left out by its label
REFERENCED_LAST = 391  # the formulas read rows 2..391: the rows added below are extended over
SPECIAL: dict[int, tuple[str, CellValue]] = {
    7: ("x", "2.5"),  # a number stored as text: parsed and used
    11: ("y", " 1,250 "),  # a number stored as text with a separator and spaces
    19: ("x", None),  # a blank
    23: ("y", True),  # a logical
    31: ("x", ErrorValue("#DIV/0!")),  # an error value
    37: ("y", "n/a"),  # text that is no number
}


def _table() -> tuple[Workbook, RegressionSpec]:
    rng = random.Random(20260101)
    cells: dict[tuple[int, int], Cell] = {}

    def put(row: int, col: int, value: CellValue) -> None:
        cells[(row, col)] = Cell("Data", row, col, value)

    put(1, 1, "batch")
    put(1, 2, "dose")
    put(1, 3, "response")
    used_y: list[float] = []
    for row in range(2, LAST_DATA_ROW + 1):
        x, y = rng.uniform(0.0, 10.0), rng.uniform(50.0, 150.0)
        put(row, 1, f"B{row}" if row % 10 == 0 else float(row))  # some labels are text
        if row == SUBTOTAL_ROW:
            put(row, 1, "Total")
        column, special = SPECIAL.get(row, ("", None))
        put(row, 2, special if column == "x" else x)
        put(row, 3, special if column == "y" else y)
        if row == 11:
            used_y.append(1250.0)
        elif row == 7 or row not in SPECIAL and row != SUBTOTAL_ROW:
            used_y.append(y)
    mean_row = LAST_DATA_ROW + 1
    put(mean_row, 1, "Mean")
    put(mean_row, 2, 5.0)
    put(mean_row, 3, sum(used_y) / len(used_y))
    sheet = Sheet("Data", cells, max_row=mean_row, max_col=3)
    workbook = Workbook("generated.xlsx", "0" * 64, {"Data": sheet}, [], stored_values=True)
    spec = RegressionSpec(
        "Results/E2",
        "Data",
        Ref("Data", 2, 2, REFERENCED_LAST, 2),
        Ref("Data", 2, 3, REFERENCED_LAST, 3),
        True,
        "formulas",
    )
    return workbook, spec


def _outcome(data: Extracted) -> tuple[object, ...]:
    return (
        [point.to_dict() for point in data.points],
        [(type(point.y), [type(v) for v in point.x]) for point in data.points],
        data.x.tobytes(),
        data.x.shape,
        data.y.tobytes(),
        data.intended_x_range,
        data.intended_y_range,
        data.dropped,
        data.parsed,
        data.total_rows,
        data.n_as_written,
    )


def test_fast_path_gives_what_the_per_cell_classification_gives() -> None:
    workbook, spec = _table()
    fast = extract(workbook, Evaluator(workbook), spec)
    reference = extract(workbook, Evaluator(workbook), spec, cell_by_cell=True)
    assert _outcome(fast) == _outcome(reference)


def test_generated_table_notes_by_hand() -> None:
    workbook, spec = _table()
    data = extract(workbook, Evaluator(workbook), spec)
    mean_row = LAST_DATA_ROW + 1
    # Rows 2..401 and the mean row below; 4 rows dropped, the subtotal and mean rows left out.
    assert len(data.points) == LAST_DATA_ROW
    assert data.n == LAST_DATA_ROW - 1 - 4 - 1
    assert data.intended_y_range == f"Data!C2:C{mean_row}"
    assert data.total_rows == [SUBTOTAL_ROW, mean_row]
    assert data.points[-1].reason == "total or mean row (Mean)"
    assert data.points[SUBTOTAL_ROW - 2].reason == "total or mean row (Total)"
    assert data.dropped == [
        ("Data!B19", "empty"),
        ("Data!C23", "a logical value"),
        ("Data!B31", "an error value #DIV/0!"),
        ("Data!C37", "text 'n/a'"),
    ]
    assert data.parsed == [
        ("Data!B7", "number stored as text '2.5'"),
        ("Data!C11", "number stored as text ' 1,250 '"),
    ]
    by_row = {point.row: point for point in data.points}
    assert by_row[7].x == [2.5] and by_row[7].used and not by_row[7].used_as_written
    assert by_row[11].y == 1250.0 and by_row[11].used
    assert by_row[REFERENCED_LAST].reason == ""
    assert by_row[REFERENCED_LAST + 1].reason == "outside the formula's range"
    assert by_row[REFERENCED_LAST + 1].used and not by_row[REFERENCED_LAST + 1].used_as_written
    # The author's formulas see the 390 referenced rows less the 6 with a non-number cell.
    assert data.n_as_written == REFERENCED_LAST - 1 - len(SPECIAL)
    assert np.isfinite(data.x).all() and data.x.shape == (data.n, 1)
