"""The intended table of data laid out in rows (x in one row, y in the row below, one point per
column): the columns the ranges name, extended to the right over the columns that continue the
table, a total or mean column left out on evidence.

The same rules as a table in columns (:mod:`auditor.extract.entry`), turned on their side: the
author's ranges grow over columns added later only while those columns continue the pattern of
the last one (typed numbers beside typed numbers, or one formula copied across) and belong to no
other regression; a column is a total, never an observation, when a word says so (``Total``,
``Mean`` above the x row or before the data), when its cells sum or average the cells to their
left, or when its y equals the sum or mean of the y values before it *and* its number format
differs from theirs. Each point's ``row`` is the sheet column it sits in (reported in words as a
column).
"""

from __future__ import annotations

import numpy as np

from auditor.extract.intended import TOTAL_LABEL
from auditor.extract.record import Extracted, Reader, cell_number, range_text
from auditor.extract.tables import paired
from auditor.extract.totals import continues_pattern, format_changes, summary_formula
from auditor.grid import column_letter
from auditor.locate.spec import RegressionSpec
from auditor.model import DataPoint
from auditor.read.workbook import Sheet, Workbook

LABEL_REACH = 3  # rows above the x row (and columns before the data) read for a column's word


def _claimed(spec: RegressionSpec, col: int) -> bool:
    """Another regression's own range holds column ``col`` in one of this one's rows."""
    for other in spec.neighbour_ranges:
        if other.sheet.lower() != spec.y.sheet.lower() or not other.c1 <= col <= other.c2:
            continue
        if any(other.r1 <= mine.r2 and mine.r1 <= other.r2 for mine in (spec.x, spec.y)):
            return True
    return False


def _word_for(sheet: Sheet, top: int, col: int) -> str:
    """A total word above the column's first data row (the header row of a table in rows)."""
    for row in range(top - 1, max(0, top - 1 - LABEL_REACH), -1):
        value = sheet.value(row, col)
        if isinstance(value, str) and cell_number(value)[0] is None:
            return value
    return ""


class _Across:
    """Turns each column of the extended table into a DataPoint."""

    def __init__(self, workbook: Workbook, sheet: Sheet, spec: RegressionSpec, result: Extracted):
        self.workbook, self.sheet, self.spec, self.result = workbook, sheet, spec, result
        self.referenced = set(range(spec.x.c1, spec.x.c2 + 1)) & set(
            range(spec.y.c1, spec.y.c2 + 1)
        )
        self.xs: list[float] = []
        self.ys: list[float] = []

    def _is_total(self, col: int, y: float) -> str | None:
        """Why column ``col`` is a total or mean (None: an observation)."""
        rows = (self.spec.x.r1, self.spec.y.r1)
        word = _word_for(self.sheet, min(rows), col)
        if word and TOTAL_LABEL.match(word):
            return word.strip()
        book, name = self.workbook, self.sheet.name
        if any(summary_formula(book, name, r, col, across=True) for r in rows):
            return "sums the cells before it"
        if len(self.ys) >= 2:
            total = float(np.sum(self.ys))
            mean = total / len(self.ys)
            coincides = abs(y - total) <= 1e-9 * max(abs(total), 1e-300) or (
                abs(y - mean) <= 1e-12 * max(abs(mean), 1e-300) and len(set(self.ys)) > 1
            )
            if coincides and format_changes(book, name, self.spec.y.r1, col, across=True):
                return "equals the sum or mean before it"
        return None

    def add(self, col: int, raw_x: object, raw_y: object) -> None:
        spec, result = self.spec, self.result
        (x, x_note), (y, y_note) = cell_number(raw_x), cell_number(raw_y)
        in_refs = col in self.referenced
        plain = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in (raw_x, raw_y))
        used, reason = x is not None and y is not None, ""
        if used:
            assert x is not None and y is not None
            why = self._is_total(col, y)
            if why is not None:
                used, reason = False, f"total or mean row ({why})"
                result.total_rows.append(col)
        notes = [(note, r) for note, r in ((x_note, spec.x.r1), (y_note, spec.y.r1)) if note]
        if x is None or y is None:
            reason = "; ".join(n for n, _ in notes if not n.startswith("number stored")) or "empty"
            for note, row in notes:
                if not note.startswith("number stored"):
                    result.dropped.append((f"{spec.y.sheet}!{column_letter(col)}{row}", note))
        elif used:
            for note, row in notes:
                if note.startswith("number stored"):
                    result.parsed.append((f"{spec.y.sheet}!{column_letter(col)}{row}", note))
                    reason = note + " (parsed)"
            if not in_refs:
                reason = (reason + "; " if reason else "") + "outside the formula's range"
        as_written = in_refs and plain  # a total inside the ranges is fitted as a point
        if as_written:
            result.n_as_written += 1
        result.points.append(DataPoint(col, [x], y, used, as_written, reason))
        if used:
            assert x is not None and y is not None
            self.xs.append(x)
            self.ys.append(y)


def across(workbook: Workbook, evaluator: Reader, spec: RegressionSpec) -> Extracted:
    """The intended table of a regression whose data lie in rows (see the module's words);
    ranges on two sheets or over different columns are paired position by position."""
    x_ref, y_ref = spec.x, spec.y
    sheet = workbook.sheet(y_ref.sheet)
    if sheet is None or x_ref.sheet.lower() != y_ref.sheet.lower() or x_ref.r1 == y_ref.r1:
        return paired(workbook, evaluator, spec)
    if (x_ref.c1, x_ref.c2) != (y_ref.c1, y_ref.c2):
        return paired(workbook, evaluator, spec)
    rows = [x_ref.r1, y_ref.r1]
    first, last = x_ref.c1, x_ref.c2

    def numeric(col: int) -> bool:
        return all(
            cell_number(evaluator.cell_value(sheet.name, r, col))[0] is not None for r in rows
        )

    while (
        last < sheet.max_col
        and numeric(last + 1)
        and continues_pattern(workbook, [(sheet.name, r) for r in rows], last, last + 1, True)
        and not _claimed(spec, last + 1)
    ):
        last += 1
    result = Extracted(
        x=np.empty((0, 1)),
        y=np.empty(0),
        points=[],
        intended_x_range=range_text(x_ref.sheet, first, x_ref.r1, last, x_ref.r1),
        intended_y_range=range_text(y_ref.sheet, first, y_ref.r1, last, y_ref.r1),
    )
    table = _Across(workbook, sheet, spec, result)
    for col in range(first, last + 1):
        table.add(
            col,
            evaluator.cell_value(x_ref.sheet, x_ref.r1, col),
            evaluator.cell_value(y_ref.sheet, y_ref.r1, col),
        )
    result.x = np.array(table.xs, dtype=float).reshape(-1, 1)
    result.y = np.array(table.ys, dtype=float)
    return result
