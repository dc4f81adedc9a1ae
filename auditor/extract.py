"""The data of a regression: as its formulas see it, and as the table the author meant.

*As written*: the cells the formulas reference, with SLOPE-family semantics (a pair with a text,
logical or empty cell is skipped). *Intended*: the columns of the referenced ranges extended over
the contiguous data rows around them, numbers stored as text parsed, a trailing total or mean
row left out, header rows skipped. Every cell dropped or parsed is recorded with the reason.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, cast

import numpy as np

from auditor.compare.precision import parse_text_number
from auditor.evaluation.evaluator import Evaluator, Unsupported, Unverifiable
from auditor.extract_fallback import StoredFallback
from auditor.extract_pasted import pasted_points
from auditor.extract_totals import (
    claimed_elsewhere,
    continues_pattern,
    format_changes,
    summary_formula,
)
from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.locate.locator import RegressionSpec
from auditor.model import DataPoint
from auditor.read.workbook import ErrorValue, Workbook

Reader = Evaluator | StoredFallback  # what extraction reads cells through

TOTAL_LABEL = re.compile(r"^\s*(grand\s+)?(total|sum|mean|average|avg|σ|Σ)\b", re.I)
MAX_GAP_SCAN = 1_048_576


@dataclass
class Extracted:
    x: np.ndarray  # (n, k) intended
    y: np.ndarray  # (n,)
    points: list[DataPoint]
    intended_x_range: str
    intended_y_range: str
    dropped: list[tuple[str, str]] = field(default_factory=list)  # (cell, why)
    parsed: list[tuple[str, str]] = field(default_factory=list)  # (cell, what was parsed)
    total_rows: list[int] = field(default_factory=list)
    n_as_written: int = 0  # pairs the author's SLOPE-family formulas see
    taken_as_stored: list[tuple[str, str]] = field(default_factory=list)  # (cell, why)

    @property
    def n(self) -> int:
        return int(self.y.shape[0])


def _number(value: object) -> tuple[float | None, str]:
    """A cell value as a number for the intended table, and a note when it was not plain."""
    if isinstance(value, bool):
        return None, "a logical value"
    if isinstance(value, (int, float)):
        return float(value), ""
    if isinstance(value, ErrorValue):
        return None, f"an error value {value.code}"
    if isinstance(value, str):
        parsed = parse_text_number(value)
        if parsed is not None:
            return parsed, f"number stored as text {value!r}"
        return None, f"text {value!r}"
    return None, "empty"


def _column_values(evaluator: Reader, sheet: str, col: int, r1: int, r2: int) -> list[object]:
    if r2 < r1:
        return []  # a range past the sheet's last row (a damaged or empty sheet) holds nothing
    ref = Ref(sheet, r1, col, r2, col)
    return [row[0] for row in evaluator.range_values(ref)]


def _is_data_row(values: list[object]) -> bool:
    return all(_number(v)[0] is not None for v in values)


def _row_label(workbook: Workbook, sheet: str, row: int, first_col: int) -> str:
    found = workbook.sheet(sheet)
    if found is None:
        return ""
    for col in range(max(1, first_col - 3), first_col + 1):
        value = found.value(row, col)
        if isinstance(value, str) and _number(value)[0] is None:
            return value
    return ""


@dataclass
class _RunningTotal:
    """Sum and count of the y values kept so far, so that spotting a total or mean row costs
    O(1) per row (summing every earlier value on each row was quadratic: minutes at 200k rows).
    Values are added in row order, so the sum is the same as ``sum()`` over the list."""

    total: float = 0.0
    count: int = 0
    first: float | None = None
    varied: bool = False

    def add(self, value: float) -> None:
        self.total += value
        self.count += 1
        if self.first is None:
            self.first = value
        elif value != self.first:
            self.varied = True

    def looks_like_total(self, y: float) -> bool:
        if self.count < 2:
            return False
        mean = self.total / self.count
        return abs(y - self.total) <= 1e-9 * max(abs(self.total), 1e-300) or (
            abs(y - mean) <= 1e-12 * max(abs(mean), 1e-300) and self.varied
        )


class _IntendedRows:
    """Turns the rows of the extended block into DataPoints, the intended x and y, and the notes
    on dropped, parsed and total cells.

    Most rows hold Python floats only (the evaluator gives every number as one); for them the
    outcome is fixed (used, no note, ``float(v)`` is ``v``) but for the total-or-mean test, so
    they skip the per-cell classification, and the row label is read only where it can matter.
    Every other row (text, blank, logical, error, anything not exactly a float) goes cell by
    cell. ``cell_by_cell=True`` sends every row that way: the reference the fast path is tested
    against.
    """

    def __init__(
        self,
        workbook: Workbook,
        sheet: str,
        x_cols: list[int],
        y_col: int,
        rows_referenced: set[int],
        result: Extracted,
        *,
        cell_by_cell: bool = False,
    ) -> None:
        self.workbook, self.sheet, self.result = workbook, sheet, result
        self.x_cols, self.y_col = x_cols, y_col
        self.label_col = min(x_cols + [y_col])
        self.rows_referenced = rows_referenced
        self.cell_by_cell = cell_by_cell
        self.running = _RunningTotal()
        self.xs_used: list[list[float]] = []
        self.ys_used: list[float] = []

    def add_all(self, first: int, last: int, x_block: np.ndarray, y_column: list[Any]) -> None:
        x_columns: list[list[Any]] = [x_block[:, j].tolist() for j in range(len(self.x_cols))]
        rows = range(first, last + 1)
        if self.cell_by_cell:
            for offset, r in enumerate(rows):
                self._add_cell_by_cell(
                    r, [column[offset] for column in x_columns], y_column[offset]
                )
            return
        # Offsets of rows with any cell that is not a Python float (the evaluator gives every
        # number as one): those go cell by cell.
        mixed: set[int] = set()
        for column in [*x_columns, y_column]:
            mixed.update(offset for offset, v in enumerate(column) if type(v) is not float)
        # _row_label returns "" unless a label cell holds text, so only those rows (and rows
        # whose y matches the running sum or mean) need it.
        text_rows = _text_label_rows(self.workbook, self.sheet, first, last, self.label_col)
        result, running, referenced = self.result, self.running, self.rows_referenced
        points = result.points
        xs_used, ys_used = self.xs_used, self.ys_used
        x_rows = map(list, zip(*x_columns, strict=True)) if x_columns else ([] for _ in rows)
        for offset, (r, xs, y) in enumerate(zip(rows, x_rows, y_column, strict=True)):
            if offset in mixed:
                self._add_cell_by_cell(r, xs, y)
            elif r in text_rows or running.looks_like_total(y):
                self._add_possible_total(r, xs, y)
            else:  # what _add_cell_by_cell gives for a row of floats that is not a total
                in_refs = r in referenced
                if in_refs:
                    result.n_as_written += 1
                reason = "" if in_refs else "outside the formula's range"
                points.append(DataPoint(r, xs, y, True, in_refs, reason))
                xs_used.append(xs)
                ys_used.append(y)
                running.add(y)

    def _is_total(self, r: int, label: str, y: float) -> bool:
        """A total or summary row needs evidence, never arithmetic coincidence alone (0.72 =
        0.24 + 0.48 because y is proportional to x; rounded returns that happen to add up): a
        word in its label cell, a SUM/AVERAGE-type formula over the rows above, or a value that
        equals the sum or mean above *and* a number format unlike the row above it."""
        if label and TOTAL_LABEL.match(label):
            return True
        if summary_formula(self.workbook, self.sheet, r, self.y_col):
            return True
        return self.running.looks_like_total(y) and format_changes(
            self.workbook, self.sheet, r, self.y_col
        )

    def _add_possible_total(self, r: int, xs: list[float], y: float) -> None:
        """A row of Python floats whose label cells hold text or whose y matches the running sum
        or mean: what ``_add_cell_by_cell`` gives for it (there are no notes to record)."""
        result = self.result
        used, reason = True, ""
        label = _row_label(self.workbook, self.sheet, r, self.label_col)
        if self._is_total(r, label, y):
            used = False
            reason = f"total or mean row ({label.strip() or 'equals the sum or mean above'})"
            result.total_rows.append(r)
        in_refs = r in self.rows_referenced
        if used and not in_refs:
            reason = "outside the formula's range"
        if in_refs:
            result.n_as_written += 1
        result.points.append(DataPoint(r, cast("list[float | None]", xs), y, used, in_refs, reason))
        if used:
            self.xs_used.append(xs)
            self.ys_used.append(y)
            self.running.add(y)

    def _add_cell_by_cell(self, r: int, raw_x: list[object], raw_y: object) -> None:
        result, x_cols, sheet = self.result, self.x_cols, self.sheet
        numbers = [_number(v) for v in raw_x] + [_number(raw_y)]
        in_refs = r in self.rows_referenced
        pair_ok = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in raw_x) and (
            isinstance(raw_y, (int, float)) and not isinstance(raw_y, bool)
        )
        xs = [n for n, _ in numbers[:-1]]
        y = numbers[-1][0]
        reason = ""
        used = all(v is not None for v in xs) and y is not None
        notes = [
            note for (_, note), col in zip(numbers, x_cols + [self.y_col], strict=True) if note
        ]
        if used:
            label = _row_label(self.workbook, sheet, r, self.label_col)
            if self._is_total(r, label, y):  # type: ignore[arg-type]
                used = False
                reason = f"total or mean row ({label.strip() or 'equals the sum or mean above'})"
                result.total_rows.append(r)
        if not used and not reason:
            reason = "; ".join(n for n in notes if not n.startswith("number stored")) or "empty"
            for (_, note), col in zip(numbers, x_cols + [self.y_col], strict=True):
                if note and not note.startswith("number stored"):
                    result.dropped.append((f"{sheet}!{column_letter(col)}{r}", note))
        elif used:
            for (_, note), col in zip(numbers, x_cols + [self.y_col], strict=True):
                if note.startswith("number stored"):
                    result.parsed.append((f"{sheet}!{column_letter(col)}{r}", note))
                    reason = note + " (parsed)"
            if not in_refs:
                reason = (reason + "; " if reason else "") + "outside the formula's range"
        used_as_written = in_refs and pair_ok
        if used_as_written:
            result.n_as_written += 1
        result.points.append(DataPoint(r, list(xs), y, used, used_as_written, reason))
        if used:
            self.xs_used.append([float(v) for v in xs])  # type: ignore[arg-type]
            self.ys_used.append(float(y))  # type: ignore[arg-type]
            self.running.add(float(y))  # type: ignore[arg-type]


def _text_label_rows(
    workbook: Workbook, sheet: str, first: int, last: int, label_col: int
) -> set[int]:
    """The rows whose label cells, as ``_row_label`` reads them, hold any text."""
    found = workbook.sheet(sheet)
    if found is None:
        return set()
    get = found.cells.get
    rows = range(first, last + 1)
    text_rows: set[int] = set()
    for col in range(max(1, label_col - 3), label_col + 1):
        cells = [get((row, col)) for row in rows]
        text_rows.update(
            row
            for row, cell in zip(rows, cells, strict=True)
            if cell is not None and isinstance(cell.value, str)
        )
    return text_rows


def extract(
    workbook: Workbook, evaluator: Evaluator, spec: RegressionSpec, *, cell_by_cell: bool = False
) -> Extracted:
    """The intended table of ``spec``. ``cell_by_cell=True`` classifies every row one cell at a
    time (slow on large tables): the reference the fast path is tested against. A data cell
    whose formula cannot be evaluated is read as stored (recorded in ``taken_as_stored``)."""
    if spec.found_by == "trendline":
        return _series_table(spec)
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
        return _paired(workbook, evaluator, spec)
    k = x_ref.c2 - x_ref.c1 + 1
    x_cols = list(range(x_ref.c1, x_ref.c2 + 1))
    same_frame = x_ref.sheet.lower() == y_ref.sheet.lower()
    rows_referenced = set(range(x_ref.r1, x_ref.r2 + 1)) & set(range(y_ref.r1, y_ref.r2 + 1))
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
        return _paired(workbook, evaluator, spec)
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
        intended_x_range=_range_text(x_ref.sheet, x_ref.c1, first, x_ref.c2, last),
        intended_y_range=_range_text(y_ref.sheet, y_ref.c1, first, y_ref.c1, last),
    )
    rows = _IntendedRows(
        workbook, y_ref.sheet, x_cols, y_ref.c1, rows_referenced, result, cell_by_cell=cell_by_cell
    )
    rows.add_all(first, last, x_block, y_column)
    result.x = np.array(rows.xs_used, dtype=float).reshape(-1, k)
    result.y = np.array(rows.ys_used, dtype=float)
    return result


def _paired(workbook: Workbook, evaluator: Reader, spec: RegressionSpec) -> Extracted:
    """Ranges on different sheets, unrelated rows, or data laid out in rows: pair them position
    by position, no extension. A number stored as text is parsed for the intended fit and left
    out of the as-written pairs, as SLOPE leaves it out."""
    x_values = evaluator.range_values(spec.x)
    if spec.in_rows:
        x_values = x_values.reshape(-1, 1)  # one x row: each column is a point
    y_values = evaluator.range_values(spec.y).reshape(-1)
    k = x_values.shape[1] if x_values.ndim == 2 else 1
    n = min(len(y_values), x_values.shape[0])
    xs_used: list[list[float | None]] = []
    ys_used: list[float | None] = []
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    parsed: list[tuple[str, str]] = []
    as_written = 0
    for i in range(n):
        r, c = (spec.y.r1, spec.y.c1 + i) if spec.in_rows else (spec.y.r1 + i, spec.y.c1)
        x_notes = [_number(v) for v in x_values[i]]
        xs = [number for number, _ in x_notes]
        y, y_note = _number(y_values[i])
        used = all(v is not None for v in xs) and y is not None
        raw = [*x_values[i], y_values[i]]
        numbers = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in raw)
        reason = "" if used else "not numeric"
        if used and not numbers:
            texts = [note for _, note in x_notes if note] + ([y_note] if y_note else [])
            reason = "; ".join(texts) + " (parsed)"
            parsed.append((f"{spec.y.sheet}!{column_letter(c)}{r}", "; ".join(texts)))
        as_written += used and numbers
        points.append(DataPoint(spec.y.r1 + i, xs, y, used, used and numbers, reason))
        if used:
            xs_used.append(xs)
            ys_used.append(y)
        else:
            dropped.append((f"{spec.y.sheet}!{column_letter(c)}{r}", "not numeric"))
    return Extracted(
        x=np.array(xs_used, dtype=float).reshape(-1, k),
        y=np.array(ys_used, dtype=float),
        points=points,
        intended_x_range=spec.x.address,
        intended_y_range=spec.y.address,
        dropped=dropped,
        parsed=parsed,
        n_as_written=as_written,
    )


def _range_text(sheet: str, c1: int, r1: int, c2: int, r2: int) -> str:
    return f"{sheet}!{column_letter(c1)}{r1}:{column_letter(c2)}{r2}"


def _series_table(spec: RegressionSpec) -> Extracted:
    """A chart trendline's data: the series' points exactly as the chart plots them (paired by
    position, against 1..n for a series plotted by position); no rows added below its range and
    no total row left out, since a trendline fits what the chart draws and nothing else."""
    use = spec.trendlines[0]  # auditor.locate.trendline_series.TrendlineUse
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    xs: list[float] = []
    ys: list[float] = []
    for point in use.points:
        row = point.y_at[1] if point.y_at is not None else point.position
        used = point.x is not None and point.y is not None
        reason = ""
        if not used:
            missing = "y" if point.y is None else "x"
            where = point.y_cell if point.y is None else point.x_cell
            reason = f"not drawn: its {missing} is not a number"
            if where:
                dropped.append((where, f"{missing} not a number: the chart skips the point"))
        points.append(DataPoint(row, [point.x], point.y, used, used, reason))
        if used:
            assert point.x is not None and point.y is not None
            xs.append(point.x)
            ys.append(point.y)
    x_text, y_text = spec.range_texts or (spec.x.address, spec.y.address)
    return Extracted(
        x=np.array(xs, dtype=float).reshape(-1, 1),
        y=np.array(ys, dtype=float),
        points=points,
        intended_x_range=x_text,
        intended_y_range=y_text,
        dropped=dropped,
        n_as_written=len(ys),
    )
