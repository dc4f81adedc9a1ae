"""Data cells whose formulas the evaluator cannot compute: read their stored values instead.

A data column built with a function regaudit does not evaluate (``SORT``, ``PRODUCT`` over an
array, a newer dynamic-array function) would otherwise cost the whole regression. The stored
value is what the author's own SLOPE saw, so the intended table can still be built from it;
each such cell is recorded (cell, why), and the data check names them so that a reviewer knows
those values were taken as stored, not recomputed. A file without stored values has nothing
to fall back on: the error stands and the regression becomes unverifiable.
"""

from __future__ import annotations

import numpy as np

from auditor.errors import Unsupported, Unverifiable
from auditor.evaluation.coerce import _constant as constant_value
from auditor.evaluation.evaluator import Evaluator, Value
from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.read.workbook import Workbook


class StoredFallback:
    """The two reading calls of :func:`auditor.extract.entry.extract`, falling back cell by cell
    to stored values where evaluation fails. ``taken_as_stored`` lists (cell, reason) in reading
    order."""

    def __init__(self, evaluator: Evaluator, workbook: Workbook) -> None:
        self.evaluator = evaluator
        self.workbook = workbook
        self.taken_as_stored: list[tuple[str, str]] = []

    def cell_value(self, sheet: str, row: int, col: int) -> Value:
        try:
            return self.evaluator.cell_value(sheet, row, col)
        except Unverifiable:
            raise  # another workbook's data: nothing stored here stands for it
        except Unsupported as exc:
            return self._stored(sheet, row, col, str(exc))

    def range_values(self, ref: Ref) -> np.ndarray:
        try:
            return self.evaluator.range_values(ref)
        except Unverifiable:
            raise
        except Unsupported:
            if ref.rows * ref.cols > 1_000_000:
                raise
        out = np.empty((ref.rows, ref.cols), dtype=object)
        for i, row in enumerate(range(ref.r1, ref.r2 + 1)):
            for j, col in enumerate(range(ref.c1, ref.c2 + 1)):
                out[i, j] = self.cell_value(ref.sheet, row, col)
        return out

    def _stored(self, sheet: str, row: int, col: int, why: str) -> Value:
        if not self.workbook.stored_values:
            raise Unsupported(f"{why}, and the file holds no stored value to use instead")
        found = self.workbook.sheet(sheet)
        cell = found.get(row, col) if found is not None else None
        name = found.name if found is not None else sheet
        self.taken_as_stored.append((f"{name}!{column_letter(col)}{row}", why))
        stored: Value = constant_value(None if cell is None else cell.value)
        return stored
