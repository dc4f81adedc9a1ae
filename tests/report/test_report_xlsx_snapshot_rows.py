"""A long data table's snapshot lists the rows that matter and no more; the used points beside it
(which the live formulas and the charts read) stay complete. The planted rows below are chosen
by hand, so the expected selection is known without the code."""

from __future__ import annotations

import copy
import io

import openpyxl
from test_report_xlsx_detail import section
from test_report_xlsx_support import fixture_audit

from auditor.model import DataPoint
from auditor.report.xlsx.links import detail_refs
from auditor.report.xlsx.snapshot_rows import EDGE_ROWS, SNAPSHOT_ROWS, snapshot_points
from auditor.report.xlsx.workbook import XlsxReporter


def _points(count: int) -> list[DataPoint]:
    points = []
    for index in range(count):
        x = float(index % 97)
        y = 2.0 * x + (index % 7) * 0.1
        points.append(DataPoint(index + 2, [x], y, True, True, "", y, 0.01, 1e-4, 1e-5))
    return points


def test_a_short_table_is_listed_whole() -> None:
    points = _points(SNAPSHOT_ROWS)
    assert snapshot_points(points) == points


def test_a_long_table_lists_what_a_reviewer_looks_for() -> None:
    points = _points(20_000)
    points[5000].used, points[5000].reason = False, "text 'n/a'"  # dropped
    points[6000].reason = "number stored as text '2.5' (parsed)"
    points[7000].used_as_written = False  # the author's formula missed it
    points[8000].leverage = 0.9  # the most leverage
    points[9000].residual = -55.0  # the largest residual, negative
    points[9500].cooks_distance = 3.0
    listed = snapshot_points(points)
    rows = [point.row for point in listed]
    assert rows == sorted(rows)
    for planted in (5000, 6000, 7000, 8000, 9000, 9500):
        assert points[planted].row in rows
    assert rows[:EDGE_ROWS] == [p.row for p in points[:EDGE_ROWS]]
    assert rows[-EDGE_ROWS:] == [p.row for p in points[-EDGE_ROWS:]]
    assert len(listed) < 200  # edges, the planted rows and the top of three ties of 25


def test_more_rows_treated_otherwise_than_the_limit_are_cut_at_it() -> None:
    points = _points(3 * SNAPSHOT_ROWS)
    for point in points:
        point.reason = "outside the formula's range"
    assert len(snapshot_points(points)) == SNAPSHOT_ROWS


def test_the_workbook_lists_the_chosen_rows_and_every_used_point() -> None:
    result = copy.deepcopy(fixture_audit())
    ref = next(r for r in detail_refs(result) if r.regression.x_columns == 1 and r.regression.data)
    long_table = _points(SNAPSHOT_ROWS + 1000)
    long_table[100].used, long_table[100].reason = False, "empty"
    ref.regression.data = long_table
    handle = io.BytesIO()
    XlsxReporter(detail="all").write(result, handle)
    handle.seek(0)
    sheet = openpyxl.load_workbook(handle)[ref.sheet]
    # The used points run further down than the listed rows: the table's rows have a row number.
    listed = [row for row in section(sheet, "Data snapshot", header_offset=2) if row[0] is not None]
    assert [row[0] for row in listed] == [p.row for p in snapshot_points(long_table)]
    assert len(listed) < len(long_table)
    header_row = next(c.row for c in sheet["A"] if c.value == "Data snapshot") + 2
    headers = [c.value for c in sheet[header_row]]
    y_used = headers.index("y used")
    used = [
        row[y_used]
        for row in sheet.iter_rows(min_row=header_row + 1, values_only=True)
        if row[y_used] is not None
    ]
    assert len(used) == sum(1 for p in long_table if p.used) == len(long_table) - 1
    description = sheet.cell(header_row - 1, 1).value
    assert f"of the table's {len(long_table):,} rows" in description
