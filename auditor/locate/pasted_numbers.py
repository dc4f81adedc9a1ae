"""The constant numbers of a sheet as the pasted-table search reads them: two arrays, not a dict.

A dict of (row, col) -> float costs about 140 bytes a number: 280 MB for the two million numbers
of a 1,048,576-row sheet, held while the search runs. :class:`NumberGrid` keeps the same mapping
as sorted packed keys (row and column in one int64) and float64 values, 16 bytes a number, and
hands the anchor search (:mod:`auditor.locate.pasted_anchors`) a dense copy of a band of rows at
a time. On a sheet held in the compact store the numbers are read from the store's own lists,
without building a Cell for each.

A sheet whose numbers span more than ``MAX_DENSE_CELLS`` (a sparse sheet of huge extent) keeps
the plain dict, in the sheet's own order, as before.
"""

from __future__ import annotations

import math
from array import array
from collections.abc import Iterator, Mapping

import numpy as np

from auditor.read.compact import CompactCells
from auditor.read.numbers import COLUMN_BITS as _COLUMN_BITS
from auditor.read.numbers import COLUMN_MASK as _COLUMN_MASK
from auditor.read.workbook import Sheet, sheet_index

MAX_DENSE_CELLS = 20_000_000  # the anchor search's dense bounding box (with its padding)
PADDING = 6  # rows and columns of NaN after the last number (the identities read 4 ahead)
_MAX_ROW = 1 << 47  # beyond any sheet: a damaged file's rows keep the dict


def _is_number(value: object) -> bool:
    return (
        isinstance(value, (int, float))
        and not isinstance(value, bool)
        and math.isfinite(float(value))
    )


class NumberGrid(Mapping[tuple[int, int], float]):
    """(row, col) -> float of a sheet's constant numbers; see the module's docstring."""

    def __init__(self, keys: np.ndarray, values: np.ndarray, left: int, right: int) -> None:
        if len(keys) > 1 and not bool(np.all(keys[1:] > keys[:-1])):  # not in row-major order
            order = np.argsort(keys, kind="stable")
            keys, values = keys[order], values[order]
        self._keys, self._values = keys, values
        self.top, self.bottom = int(keys[0]) >> _COLUMN_BITS, int(keys[-1]) >> _COLUMN_BITS
        self.left, self.right = left, right

    @property
    def height(self) -> int:
        """Rows of the dense copy, padding included."""
        return self.bottom - self.top + PADDING

    @property
    def width(self) -> int:
        """Columns of the dense copy, padding included."""
        return self.right - self.left + PADDING

    def band(self, first: int, stop: int) -> np.ndarray:
        """Rows ``top + first`` .. ``top + stop - 1`` of the dense copy (NaN: no number)."""
        row_first, row_stop = self.top + first, self.top + stop
        low = int(np.searchsorted(self._keys, row_first << _COLUMN_BITS))
        high = int(np.searchsorted(self._keys, row_stop << _COLUMN_BITS))
        keys = self._keys[low:high]
        dense = np.full((stop - first, self.width), np.nan)
        dense[(keys >> _COLUMN_BITS) - row_first, (keys & _COLUMN_MASK) - self.left] = self._values[
            low:high
        ]
        return dense

    def _at(self, key: object) -> int:
        row: int
        col: int
        try:
            row, col = key  # type: ignore[misc]
            if not (0 < col <= _COLUMN_MASK and 0 <= row < _MAX_ROW):
                return -1
            packed = (row << _COLUMN_BITS) | col
        except (TypeError, ValueError):
            return -1
        keys = self._keys  # the array's own method: np.searchsorted adds a dispatch per call
        at = int(keys.searchsorted(packed))
        return at if at < len(keys) and keys[at] == packed else -1

    def get(self, key: tuple[int, int], default: float | None = None) -> float | None:  # type: ignore[override]
        at = self._at(key)
        return float(self._values[at]) if at >= 0 else default

    def __getitem__(self, key: tuple[int, int]) -> float:
        at = self._at(key)
        if at < 0:
            raise KeyError(key)
        return float(self._values[at])

    def __contains__(self, key: object) -> bool:
        return self._at(key) >= 0

    def __len__(self) -> int:
        return len(self._keys)

    def __iter__(self) -> Iterator[tuple[int, int]]:
        for packed in self._keys.tolist():
            yield (packed >> _COLUMN_BITS, packed & _COLUMN_MASK)


def entries(sheet: Sheet, formulas: bool = False) -> tuple[array[int], array[int], array[float]]:
    """Rows, columns and values of the constant numbers (``formulas``: and of the formulas'
    stored numbers), in the sheet's order: from the reader's index when it has one."""
    index = sheet_index(sheet)
    if index is not None:
        return index.numbers.arrays(formulas)
    rows, cols, values = array("q"), array("q"), array("d")
    cells = sheet.cells
    if isinstance(cells, CompactCells):
        for (row, col), value in cells.constant_values(formulas):
            if _is_number(value):
                rows.append(row)
                cols.append(col)
                values.append(float(value))  # type: ignore[arg-type]
        return rows, cols, values
    for (row, col), cell in cells.items():
        if (formulas or cell.formula is None) and _is_number(cell.value):
            rows.append(row)
            cols.append(col)
            values.append(float(cell.value))  # type: ignore[arg-type]
    return rows, cols, values


def number_grid(sheet: Sheet) -> Mapping[tuple[int, int], float]:
    """Numbers typed or pasted as values (formulas, logicals and text left out): a
    :class:`NumberGrid`, or the plain dict for an empty sheet or one of huge extent."""
    index = sheet_index(sheet)
    if index is not None:  # the reader's packed keys and values, not copied
        keys, floats = index.numbers.packed()
        if len(keys) > 0:
            columns = keys & _COLUMN_MASK
            top, bottom = int(keys.min()) >> _COLUMN_BITS, int(keys.max()) >> _COLUMN_BITS
            left, right = int(columns.min()), int(columns.max())
            extent = (bottom - top + PADDING) * (right - left + PADDING)
            if extent <= MAX_DENSE_CELLS and bottom < _MAX_ROW:
                return NumberGrid(keys, floats, left, right)
    rows, cols, values = entries(sheet)
    if len(rows) > 0:
        row_array = np.frombuffer(rows, dtype=np.int64)
        col_array = np.frombuffer(cols, dtype=np.int64)
        top, bottom = int(row_array.min()), int(row_array.max())
        left, right = int(col_array.min()), int(col_array.max())
        extent = (bottom - top + PADDING) * (right - left + PADDING)
        if extent <= MAX_DENSE_CELLS and top >= 0 and bottom < _MAX_ROW and left > 0:
            if right <= _COLUMN_MASK:
                keys = (row_array << _COLUMN_BITS) | col_array
                floats = np.frombuffer(values, dtype=np.float64)  # holds ``values``, no copy
                return NumberGrid(keys, floats, left, right)
    return dict(zip(zip(rows, cols, strict=True), values, strict=True))
