"""The data snapshot of a detail sheet, and the columns that the formulas and charts read.

The snapshot lists every row of the intended data table as regaudit saw it: x, y, whether the
intended fit used it, whether the author's formula saw it, why not, and the fitted value, residual,
leverage and Cook's distance. To its right, the used points are repeated in columns of their own,
so that SLOPE() and the charts need no filtering: first those the author's formula saw, then those
it missed, so that each chart series reads one contiguous range.
"""

from __future__ import annotations

from dataclasses import dataclass

from xlsxwriter.utility import xl_rowcol_to_cell

from auditor.model import DataPoint, RegressionResult
from auditor.report.xlsx.charts import Block, ChartSource
from auditor.report.xlsx.layout import SheetWriter
from auditor.report.xlsx.snapshot_rows import snapshot_points


@dataclass(frozen=True)
class Snapshot:
    ranges: dict[str, str]  # "x", "X", "y" -> absolute ranges over the used points
    chart: ChartSource
    reason_col: int


def _absolute(first_row: int, first_col: int, last_row: int, last_col: int) -> str:
    start = xl_rowcol_to_cell(first_row, first_col, row_abs=True, col_abs=True)
    end = xl_rowcol_to_cell(last_row, last_col, row_abs=True, col_abs=True)
    return f"{start}:{end}"


def axis_title(name: str, cell_range: str) -> str:
    # A "!" would make XlsxWriter read the title as a reference to a cell holding the title.
    sheet, _, address = cell_range.rpartition("!")
    return f"{name} ({sheet.strip(chr(39))} {address})" if sheet else f"{name} ({address})"


def x_headers(columns: int) -> list[str]:
    return ["x"] if columns == 1 else [f"x{j}" for j in range(1, columns + 1)]


def _x(point: DataPoint, column: int) -> float | None:
    return point.x[column] if column < len(point.x) else None


def _description(regression: RegressionResult) -> str:
    text = (
        "Every row of the data table as regaudit read it. A row whose two yes/no columns differ "
        "is one the author's formula and the intended fit treat differently (shaded)."
    )
    listed = len(snapshot_points(regression.data))
    if listed == len(regression.data):
        return text
    return (
        f"{listed:,} of the table's {len(regression.data):,} rows: every row regaudit treated "
        "otherwise than a plain used point, the most influential used points and the first and "
        "last rows. The used points to the right are all of them; the formulas and charts read "
        "those. A row whose two yes/no columns differ is one the author's formula and the "
        "intended fit treat differently (shaded)."
    )


def _table(out: SheetWriter, regression: RegressionResult, top: int) -> int:
    """The full snapshot table; returns the column of its last ("why") column."""
    styles = out.styles
    k = regression.x_columns
    headers = ["source row", *x_headers(k), "y", "in intended fit", "seen by author's formula"]
    headers += ["fitted", "residual", "leverage", "Cook's distance", "why"]
    flags = {"source row", "in intended fit", "seen by author's formula", "why"}
    for col, text in enumerate(headers):
        out.header(top, col, text, numeric=text not in flags)
    for offset, point in enumerate(snapshot_points(regression.data), start=1):
        row = top + offset
        differs = point.used != point.used_as_written
        flag = styles.mismatch if differs else styles.top
        # The data as read (General shows them as typed); what regaudit computed, 6 digits.
        raw = [point.row, *(_x(point, j) for j in range(k)), point.y]
        out.put(row, 0, point.row, styles.count)  # a row number names a row: left, like text
        for col, value in enumerate(raw[1:], start=1):
            out.put(row, col, value, styles.number)
        col = len(raw)
        out.put(row, col, "yes" if point.used else "no", flag)
        out.put(row, col + 1, "yes" if point.used_as_written else "no", flag)
        computed = (point.fitted, point.residual, point.leverage, point.cooks_distance)
        for offset_col, value in enumerate(computed, start=col + 2):
            out.num(row, offset_col, value)
        out.put(row, col + 6, point.reason, styles.wrapped, wrap=True)
    return len(headers) - 1


def write_snapshot(
    out: SheetWriter, sheet_name: str, regression: RegressionResult, top: int
) -> Snapshot:
    """Write the snapshot from row ``top``; return the ranges the formulas and charts use."""
    styles = out.styles
    k = regression.x_columns
    out.put(top, 0, "Data snapshot", styles.section, fit=False)
    out.put(top + 1, 0, _description(regression), styles.muted, fit=False)
    header_row = top + 2
    reason_col = _table(out, regression, header_row)
    first = header_row + 1

    # The used points again, those the author's formula saw first and those it missed last:
    # the formulas read the whole block, each chart series a contiguous part of it.
    used = [p for p in regression.data if p.used]
    seen = [p for p in used if p.used_as_written]
    used = seen + [p for p in used if not p.used_as_written]
    used_col = reason_col + 2  # one empty column keeps the two blocks apart
    used_headers = [f"{h} used" for h in x_headers(k)] + ["y used", "fitted", "residual"]
    for col, text in enumerate(used_headers, start=used_col):
        out.header(header_row, col, text, numeric=True)
    seen_col = used_col + k + 3
    out.header(header_row, seen_col, "seen by author's formula")
    for offset, point in enumerate(used):
        row = first + offset
        for col, value in enumerate([*(_x(point, j) for j in range(k)), point.y], start=used_col):
            out.put(row, col, value, styles.number)
        out.num(row, used_col + k + 1, point.fitted)
        out.num(row, used_col + k + 2, point.residual)
        flag = styles.top if point.used_as_written else styles.mismatch
        out.put(row, seen_col, "yes" if point.used_as_written else "no", flag)
    y_col, fitted_col, residual_col = used_col + k, used_col + k + 1, used_col + k + 2

    last_used = first + len(used) - 1
    ranges: dict[str, str] = {}
    if used:  # without used points there is nothing for a formula to compute over
        ranges = {
            "x": _absolute(first, used_col, last_used, used_col),
            "X": _absolute(first, used_col, last_used, used_col + k - 1),
            "y": _absolute(first, y_col, last_used, y_col),
        }
    against_fitted = k > 1
    chart = ChartSource(
        sheet=sheet_name,
        used=Block(first, last_used),
        seen=Block(first, first + len(seen) - 1),
        missed=Block(first + len(seen), last_used),
        x_col=fitted_col if against_fitted else used_col,
        y_col=y_col,
        fitted_col=fitted_col,
        residual_col=residual_col,
        x_title="fitted value"
        if against_fitted
        else axis_title("x", regression.intended_x_range or regression.x_range),
        y_title=axis_title("y", regression.intended_y_range or regression.y_range),
        against_fitted=against_fitted,
    )
    return Snapshot(ranges, chart, reason_col)
