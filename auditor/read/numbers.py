"""The numbers of one sheet as the fast reader types them: packed keys and float64 values.

Part of the sheet's :class:`~auditor.read.workbook.SheetIndex`. Every cell holding a finite int
or float (not a bool, text, error or empty cell) is one entry, in the sheet's order: its row
and column packed in one int64 as the compact store packs them (``row << 15 | column``), its
value as a double, and, for the few that are formulas' stored values, its position in a third
array. 16 bytes a number: 32 MB for the two million numbers of a 1,048,576-row sheet.
"""

from __future__ import annotations

from array import array
from typing import Any

COLUMN_BITS = 15  # columns 1..16,384 (XFD)
COLUMN_MASK = (1 << COLUMN_BITS) - 1


def packed_keys(rows: list[int], cols: list[int]) -> Any:
    """``row << 15 | column`` of each cell, as a numpy int64 array."""
    import numpy as np  # here: the data classes load without numpy

    return (np.array(rows, dtype=np.int64) << COLUMN_BITS) | np.array(cols, dtype=np.int64)


class NumberIndex:
    """Packed (row, col) keys and values of a sheet's numbers; see the module's docstring."""

    def __init__(self) -> None:
        self.keys = array("q")
        self.values = array("d")
        self.formula_at = array("q")  # positions of the formulas' stored values

    def __len__(self) -> int:
        return len(self.keys)

    def add_typed(self, keys: Any, values: array[float]) -> None:
        """Typed constants, in order: their packed keys (a numpy int64 array, see
        :func:`packed_keys`) and values."""
        self.keys.frombytes(keys.tobytes())
        self.values.extend(values)

    def add(self, row: int, col: int, value: float, formula: bool) -> None:
        """One number; ``formula``: a formula's stored value."""
        if formula:
            self.formula_at.append(len(self.keys))
        self.keys.append(row << COLUMN_BITS | col)
        self.values.append(value)

    def packed(self, formulas: bool = False) -> tuple[Any, Any]:
        """Keys and values as numpy arrays (``formulas``: the formulas' stored numbers
        included), in the sheet's order: views of the index's own arrays when nothing is left
        out (not to be written to), else copies."""
        import numpy as np  # here: the data classes load without numpy

        if not self.keys:
            return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.float64)
        keys = np.frombuffer(self.keys, dtype=np.int64)
        values = np.frombuffer(self.values, dtype=np.float64)
        if self.formula_at and not formulas:
            kept = np.ones(len(keys), dtype=bool)
            kept[np.frombuffer(self.formula_at, dtype=np.int64)] = False
            keys, values = keys[kept], values[kept]
        return keys, values

    def arrays(self, formulas: bool = False) -> tuple[array[int], array[int], array[float]]:
        """Rows, columns and values (``formulas``: the formulas' stored numbers included), in
        the sheet's order; new arrays, the caller's to keep."""
        keys, values = self.packed(formulas)
        return (
            array("q", (keys >> COLUMN_BITS).tobytes()),
            array("q", (keys & COLUMN_MASK).tobytes()),
            array("d", values.tobytes()),
        )

    def entries(self) -> list[tuple[int, int, float, bool]]:
        """(row, col, value, a formula's) of every number, in order (for proofs and tests)."""
        formula = set(self.formula_at)
        return [
            (key >> COLUMN_BITS, key & COLUMN_MASK, value, position in formula)
            for position, (key, value) in enumerate(zip(self.keys, self.values, strict=True))
        ]
