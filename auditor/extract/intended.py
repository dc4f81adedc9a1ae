"""The intended rows of a regression's table: each row of the extended block becomes a DataPoint,
used or dropped with its reason, a trailing total or mean row left out on evidence (a running
total keeps that test O(1) per row)."""

from __future__ import annotations

import bisect
import re
from collections.abc import Container
from dataclasses import dataclass
from itertools import repeat
from typing import Any, cast

import numpy as np

from auditor.extract.record import Extracted, cell_number
from auditor.extract.totals import format_changes, summary_formula
from auditor.grid import column_letter
from auditor.locate.text_cells import text_cells
from auditor.model import DataPoint
from auditor.read.workbook import Workbook

_WINDOW, _MAX_WINDOW = 1024, 1 << 16  # rows tested by numpy at a time
_ONE_BY_ONE = 64  # rows taken one at a time after a total-like row early in a window


def _next(offsets: list[int], offset: int) -> int:
    """The first of the sorted ``offsets`` after ``offset`` (a large number when none is)."""
    index = bisect.bisect_right(offsets, offset)
    return offsets[index] if index < len(offsets) else 1 << 62


TOTAL_LABEL = re.compile(r"^\s*(grand\s+)?(total|sum|mean|average|avg|σ|Σ)\b", re.I)


def _row_label(workbook: Workbook, sheet: str, row: int, first_col: int) -> str:
    found = workbook.sheet(sheet)
    if found is None:
        return ""
    for col in range(max(1, first_col - 3), first_col + 1):
        value = found.value(row, col)
        if isinstance(value, str) and cell_number(value)[0] is None:
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

    def plain_prefix(self, ys: np.ndarray) -> int:
        """Add ``ys`` in turn up to the first that ``looks_like_total`` (not added); return how
        many were added. The same sums, in the same order, as ``add`` one at a time."""
        m = len(ys)
        if m == 0:
            return 0
        running = np.add.accumulate(np.concatenate(([self.total], ys)))  # left to right
        before, counts = running[:-1], self.count + np.arange(m)
        first = ys[0] if self.first is None else self.first
        differs = ys != first
        if self.first is None:
            differs[0] = False  # the first value is the first, even when it is NaN
        varied = np.concatenate(([self.varied], self.varied | np.logical_or.accumulate(differs)))
        with np.errstate(all="ignore"):
            mean = before / np.maximum(counts, 1)
            as_total = np.abs(ys - before) <= 1e-9 * np.maximum(np.abs(before), 1e-300)
            as_mean = np.abs(ys - mean) <= 1e-12 * np.maximum(np.abs(mean), 1e-300)
        hits = np.flatnonzero((counts >= 2) & (as_total | (as_mean & varied[:-1])))
        added = int(hits[0]) if hits.size else m
        if added:
            self.total = float(running[added])
            self.count += added
            self.first = float(first) if self.first is None else self.first
            self.varied = bool(varied[added])
        return added

    def looks_like_total(self, y: float) -> bool:
        if self.count < 2:
            return False
        mean = self.total / self.count
        return abs(y - self.total) <= 1e-9 * max(abs(self.total), 1e-300) or (
            abs(y - mean) <= 1e-12 * max(abs(mean), 1e-300) and self.varied
        )


class IntendedRows:
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
        rows_referenced: Container[int],
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
            if set(map(type, column)) - {float}:  # the types in one C pass; offsets if needed
                mixed.update(offset for offset, v in enumerate(column) if type(v) is not float)
        # _row_label returns "" unless a label cell holds text, so only those rows (and rows
        # whose y matches the running sum or mean) need it.
        text_rows = _text_label_rows(self.workbook, self.sheet, first, last, self.label_col)
        # Each row's x values as a list of its own (the block's rows, in one C call).
        x_rows: list[list[Any]] = x_block.tolist() if x_columns else [[] for _ in rows]
        # Between two such rows, runs of plain rows: their total-or-mean test done by numpy a
        # window at a time (_RunningTotal.plain_prefix), the rows then added in one loop.
        special = sorted(mixed | {r - first for r in text_rows if first <= r <= last})
        offset, window = 0, _WINDOW
        while offset < len(rows):
            r = first + offset
            if offset in mixed:
                self._add_cell_by_cell(r, x_rows[offset], y_column[offset])
                offset += 1
                continue
            if r in text_rows:
                self._add_possible_total(r, x_rows[offset], y_column[offset])
                offset += 1
                continue
            end = min(_next(special, offset), offset + window, len(rows))
            clear = self.running.plain_prefix(np.array(y_column[offset:end], dtype=float))
            self._add_plain(first, offset, offset + clear, x_rows, y_column)
            offset += clear
            if offset == end:
                window = min(window * 4, _MAX_WINDOW)
                continue
            # Row ``offset`` looks like a total; after an early one, the next rows go one by one
            # (a column of zeros is "a total" on every row: no window would pay).
            window = _WINDOW
            ahead = _ONE_BY_ONE if clear < 8 else 1
            stop = min(_next(special, offset), offset + ahead, len(rows))
            for one in range(offset, stop):
                y = y_column[one]
                if self.running.looks_like_total(y):
                    self._add_possible_total(first + one, x_rows[one], y)
                else:
                    self._add_plain(first, one, one + 1, x_rows, y_column)
                    self.running.add(y)
            offset = stop

    def _add_plain(
        self, first: int, start: int, stop: int, x_rows: list[list[Any]], y_column: list[Any]
    ) -> None:
        """What _add_cell_by_cell gives for rows of floats that are not totals (the running sum
        is kept by the caller)."""
        rows = range(first + start, first + stop)
        seen = list(map(self.rows_referenced.__contains__, rows))
        reasons = ["" if in_refs else "outside the formula's range" for in_refs in seen]
        xs, ys = x_rows[start:stop], y_column[start:stop]
        self.result.points.extend(map(DataPoint, rows, xs, ys, repeat(True), seen, reasons))
        self.result.n_as_written += sum(seen)
        self.xs_used.extend(x_rows[start:stop])
        self.ys_used.extend(y_column[start:stop])

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
        numbers = [cell_number(v) for v in raw_x] + [cell_number(raw_y)]
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
    low = max(1, label_col - 3)
    return {  # the sheet's few text cells, indexed once, not four columns probed row by row
        cell.row
        for cell in text_cells(workbook, found)
        if first <= cell.row <= last and low <= cell.col <= label_col
    }
