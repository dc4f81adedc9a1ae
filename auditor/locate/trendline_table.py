"""The rows of a chart series' table that continue past the series' range.

A chart's series is a fixed range: rows added to the table later are not added to the chart, so
its trendline fits the first rows only. The table *continues* when the rows (columns, for data in
rows) directly past the series' x and y ranges hold numbers in both, made like the series' last
row (typed numbers under typed numbers, or the same formula copied on: :func:`continues_pattern`),
and no other regression or chart series uses them. A blank or label row stops the walk, so a
subset split off that way is never joined to the series. A note beside the rows left out (text
where the series' last row has none) is recorded: it may say why they are out.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from auditor.extract.intended import TOTAL_LABEL
from auditor.extract.totals import continues_pattern, format_changes, summary_formula
from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.locate.spec import RegressionSpec, overlaps
from auditor.locate.trendline_series import TrendlineUse, series_block
from auditor.read.workbook import Cell, Sheet, Workbook

MAX_REST = 10_000  # positions walked past a series at most (a table, not a whole sheet)
MAX_LINES = 30  # lines of a table read for labels and notes beside the series


@dataclass
class TableRest:
    """What continues past a series: the positions left out and their values."""

    across: bool  # data in rows: the positions are columns
    positions: list[int] = field(default_factory=list)  # rows (or columns) left out, in order
    xs: list[float] = field(default_factory=list)
    ys: list[float] = field(default_factory=list)
    x_table: Ref | None = None  # the series' x range extended over the rest
    y_table: Ref | None = None
    notes: list[str] = field(default_factory=list)  # "Sheet!A14 'outlier'": text beside the rest


def _number(cell: Cell | None, stored: bool) -> float | None:
    """A typed number, or a formula's stored value when the file holds stored values."""
    if cell is None or (cell.formula and not stored):
        return None
    value = cell.value
    if isinstance(value, bool) or not isinstance(value, int | float):
        return None
    return float(value)


def _extend(ref: Ref, across: bool, to: int) -> Ref:
    if across:
        return Ref(ref.sheet, ref.r1, ref.c1, ref.r2, to)
    return Ref(ref.sheet, ref.r1, ref.c1, to, ref.c2)


def _at(ref: Ref, across: bool, position: int) -> Ref:
    if across:
        return Ref(ref.sheet, ref.r1, position, ref.r2, position)
    return Ref(ref.sheet, position, ref.c1, position, ref.c2)


def _aligned(use: TrendlineUse) -> tuple[Ref, Ref, bool] | None:
    """The series' x and y blocks when they run side by side on one sheet, and the direction."""
    x, y = use.x_ref, use.y_ref
    if x is None or y is None or use.by_position or use.length_mismatch:
        return None
    if x.sheet.lower() != y.sheet.lower():
        return None
    if x.cols == 1 and y.cols == 1 and x.rows > 1 and (x.r1, x.r2) == (y.r1, y.r2):
        return x, y, False
    if x.rows == 1 and y.rows == 1 and x.cols > 1 and (x.c1, x.c2) == (y.c1, y.c2):
        return x, y, True
    return None


def _text(sheet: Sheet, line: int, position: int, across: bool) -> str:
    cell = sheet.get(line, position) if across else sheet.get(position, line)
    value = cell.value if cell is not None else None
    return value.strip() if isinstance(value, str) else ""


def _lines(sheet: Sheet, x: Ref, y: Ref, across: bool, last: int) -> range:
    """The lines (columns, or rows for data in rows) of the table around x and y: those filled
    next to them at the series' last position, and one more on each side (a note column)."""
    low = min(x.r1, y.r1) if across else min(x.c1, y.c1)
    high = max(x.r1, y.r1) if across else max(x.c1, y.c1)

    def filled(line: int) -> bool:
        cell = sheet.get(line, last) if across else sheet.get(last, line)
        return cell is not None and cell.value is not None

    while low > 1 and high - low < MAX_LINES and filled(low - 1):
        low -= 1
    while high - low < MAX_LINES and filled(high + 1):
        high += 1
    return range(max(1, low - 1), high + 2)


def _total_row(workbook: Workbook, x: Ref, y: Ref, across: bool, position: int) -> bool:
    """Data down columns: a SUM/AVERAGE-type formula over the rows above, or a number format
    unlike the row above (:mod:`auditor.extract.totals`). Across, a summary formula differs
    from the typed or copied cells before it, which the pattern test already stops at."""
    if across:
        return False
    return any(
        summary_formula(workbook, ref.sheet, position, ref.c1)
        or format_changes(workbook, ref.sheet, position, ref.c1)
        for ref in (x, y)
    )


def table_rest(workbook: Workbook, use: TrendlineUse, others: list[Ref]) -> TableRest | None:
    """The positions that continue the series' table past its range, or None."""
    aligned = _aligned(use)
    if aligned is None:
        return None
    x, y, across = aligned
    sheet = workbook.sheet(x.sheet)
    if sheet is None:
        return None
    last = x.c2 if across else x.r2
    end = min(sheet.max_col if across else sheet.max_row, last + MAX_REST)
    lines = _lines(sheet, x, y, across, last)
    labelled = {line for line in lines if _text(sheet, line, last, across)}
    rest = TableRest(across)
    position = last
    while position < end:
        after = position + 1
        cells = (
            [sheet.get(x.r1, after), sheet.get(y.r1, after)]
            if across
            else [sheet.get(after, x.c1), sheet.get(after, y.c1)]
        )
        values = [_number(cell, workbook.stored_values) for cell in cells]
        if values[0] is None or values[1] is None:
            break
        ends = [(x.sheet, x.r1), (y.sheet, y.r1)] if across else [(x.sheet, x.c1), (y.sheet, y.c1)]
        made = continues_pattern(workbook, ends, position, after, across)
        texts = {line: _text(sheet, line, after, across) for line in lines}
        if (
            not made
            or any(TOTAL_LABEL.match(text) for text in texts.values())
            or _total_row(workbook, x, y, across, after)
            or any(
                overlaps(_at(block, across, after), other) for block in (x, y) for other in others
            )
        ):
            break
        rest.notes += [
            f"{_address(x.sheet, line, after, across)} '{text[:40]}'"
            for line, text in texts.items()
            if text and line not in labelled
        ]
        rest.positions.append(after)
        rest.xs.append(values[0])
        rest.ys.append(values[1])
        position = after
    if not rest.positions:
        return None
    rest.x_table, rest.y_table = _extend(x, across, position), _extend(y, across, position)
    return rest


def _address(sheet: str, line: int, position: int, across: bool) -> str:
    row, col = (line, position) if across else (position, line)
    return f"{sheet}!{column_letter(col)}{row}"


def attach_rests(workbook: Workbook, specs: list[RegressionSpec]) -> None:
    """Record on every trendline regression's series what of its table it leaves out."""
    series = [
        (chart, one, block)
        for chart in workbook.charts
        for one in chart.series
        for values in (one.x, one.y)
        for block in [series_block(workbook, values, chart.sheet)]
        if block is not None
    ]
    for spec in specs:
        if spec.found_by != "trendline" or not spec.trendlines:
            continue
        use: TrendlineUse = spec.trendlines[0]
        others = [
            block
            for other in specs
            if other is not spec
            for block in (other.x, other.y)
            if block.sheet
        ]
        others += [block for _, one, block in series if one is not use.series]
        use.table_rest = table_rest(workbook, use, others)
