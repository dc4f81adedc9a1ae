"""A long column of a sheet read through the reader's number index instead of cell by cell.

The evaluator reads a range a column at a time. On a sheet the fast reader typed, the numbers
of every cell (constants and formulas' stored values alike) are held as packed, row-major keys
and doubles (:class:`~auditor.read.numbers.NumberIndex`): the rows of a column that hold a number
are found by one binary search over the keys, and only the other rows (text, logicals, errors,
empty cells) are looked up one by one. A number comes back as the float ``constants`` makes of
it (an int's float, the float itself), so the block holds what the plain reading gives.
"""

from __future__ import annotations

import numpy as np

from auditor.read.numbers import COLUMN_BITS, COLUMN_MASK
from auditor.read.workbook import CellValue, Sheet, sheet_index

MIN_ROWS = 384  # below this, looking the cells up one by one costs less (measured: even at ~300)


class IndexedColumns:
    """Reads columns through the number index of the sheets whose keys are in row order
    (checked once per sheet: a file may list its cells out of order; then the cells are read
    one by one as before)."""

    def __init__(self) -> None:
        self._ordered: dict[int, bool] = {}  # id of a sheet's index -> keys strictly ascending

    def column(self, sheet: Sheet, col: int, first: int, last: int) -> list[CellValue] | None:
        """The stored value of each cell of column ``col``, rows ``first``..``last`` (None where
        there is no cell, numbers as floats); None when the index cannot give them."""
        index = sheet_index(sheet)
        if index is None or last - first + 1 < MIN_ROWS or not 0 < col <= COLUMN_MASK:
            return None
        if first < 1 or last >= 1 << (63 - COLUMN_BITS):
            return None
        keys, values = index.numbers.packed(formulas=True)  # views: nothing is left out
        if len(keys) == 0:
            return None
        ordered = self._ordered.get(id(index))
        if ordered is None:
            ordered = self._ordered[id(index)] = bool(np.all(keys[1:] > keys[:-1]))
        if not ordered:
            return None
        wanted = (np.arange(first, last + 1, dtype=np.int64) << COLUMN_BITS) | col
        at = np.minimum(np.searchsorted(keys, wanted), len(keys) - 1)
        hit = keys[at] == wanted
        block = np.full(len(wanted), None, dtype=object)
        block[hit] = values[at[hit]].tolist()  # Python floats
        out: list[CellValue] = block.tolist()
        get = sheet.cells.get
        for offset in np.flatnonzero(~hit).tolist():
            cell = get((first + offset, col))
            if cell is not None:
                out[offset] = cell.value
        return out
