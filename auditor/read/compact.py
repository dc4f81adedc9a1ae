"""A compact cell store for very large sheets: the cells of ``Sheet.cells`` without a
:class:`Cell` object per typed number.

A cell held as an object in a dict costs about 230 bytes (the Cell tuple 96, its (row, col)
key 56, the dict entry about 42, the float 24, a share of the row number): 460 MB for the two
million cells of a 1,048,576-row sheet. Here a constant cell costs about 45: one 64-bit key
(row and column packed), its value in a list, its number format as a small index. Formulas,
array anchors and anything written out of order keep their Cell objects in the same sequence.

The store is a ``MutableMapping`` with the dict's behaviour where the audit relies on it:
iteration in insertion order (the sheet's row-major document order), replacement in place,
look-up by (row, col). A Cell is built at each look-up, in a Python method where a dict's
``get`` is C: twenty workbooks of ten 500-row sheets (40 KB of XML each) have half their cells
looked up, twice each, and their audit ran 5 % slower with the store on every sheet; a sheet
of 10,000 rows or more is read and audited faster with it (200,000 rows: 1.9 → 1.45 s), so
parts from :data:`COMPACT_PART_BYTES` use it. Anything the sequence cannot hold in order (a
key before the last, a removal) turns the store into a plain dict, once, and it behaves as one
from then on.
"""

from __future__ import annotations

import os
from array import array
from bisect import bisect_left
from collections.abc import ItemsView, Iterator, MutableMapping, ValuesView
from typing import Any

import numpy as np

from auditor.read.numbers import COLUMN_BITS as _COLUMN_BITS
from auditor.read.numbers import COLUMN_MASK as _COLUMN_MASK
from auditor.read.sheet import built_cell
from auditor.read.workbook import Cell, CellValue

# Inflated sheet XML from which the store is used (two columns: 13,000 rows); the internal
# $REGAUDIT_COMPACT_BYTES sets it, e.g. to 0 to audit every fixture with the store.
COMPACT_PART_BYTES = int(os.environ.get("REGAUDIT_COMPACT_BYTES") or 1 << 20)
_OBJECT = 0xFFFF  # format index meaning "the list holds the Cell itself"
_MAX_PACKED = 1 << 62  # rows beyond any sheet (a damaged file) go to the dict


class CompactCells(MutableMapping[tuple[int, int], Cell]):
    """(row, col) -> Cell, constants stored packed; see the module's docstring."""

    def __init__(self, sheet: str) -> None:
        self._sheet = sheet
        self._keys = array("q")
        self._values: list[CellValue | Cell] = []
        self._formats = array("H")
        self._format_names: list[str] = []
        self._format_ids: dict[str, int] = {}
        self._last = -1
        self._hint = self._stride = 0  # the last position found, and the step that led to it
        self._dict: dict[tuple[int, int], Cell] | None = None

    def add_constant(self, row: int, col: int, value: CellValue, number_format: str) -> None:
        """A cell with no formula and no array block (the reader's hot path)."""
        key = (row << _COLUMN_BITS) | col
        if self._last < key < _MAX_PACKED and self._dict is None:
            index = self._format_ids.get(number_format)
            if index is None:
                index = self._format_id(number_format)
            if index >= 0:
                self._keys.append(key)
                self._values.append(value)
                self._formats.append(index)
                self._last = key
                return
        self[(row, col)] = Cell(self._sheet, row, col, value, None, number_format, None)

    def add_constants(self, keys: Any, values: list[CellValue], formats: list[str]) -> None:
        """Cells with no formula and no array block, in order (``keys``: numpy int64, packed):
        at once when they follow the last key in increasing order (a run of the reader), else
        one by one."""
        new = set(formats).difference(self._format_ids)
        if (
            self._dict is not None
            or not len(keys)
            or not self._last < keys[0] <= keys[-1] < _MAX_PACKED
            or not (keys[1:] > keys[:-1]).all()
            or any(self._format_id(name) < 0 for name in sorted(new))
        ):
            for key, value, number_format in zip(keys.tolist(), values, formats, strict=True):
                self.add_constant(key >> _COLUMN_BITS, key & _COLUMN_MASK, value, number_format)
            return
        self._keys.frombytes(keys.tobytes())
        self._values.extend(values)
        self._formats.extend(map(self._format_ids.__getitem__, formats))
        self._last = int(keys[-1])

    def _format_id(self, number_format: str) -> int:
        """The index of a number format; -1 when the index is full (the cell keeps an object)."""
        if len(self._format_names) >= _OBJECT:
            return -1
        self._format_ids[number_format] = len(self._format_names)
        self._format_names.append(number_format)
        return self._format_ids[number_format]

    def _position(self, key: tuple[int, int]) -> int:
        """Where ``key`` is in the sequence, or -1 (also for anything that is not a key)."""
        try:
            row, col = key
            if not 0 < col < 1 << _COLUMN_BITS or not 0 <= row < _MAX_PACKED >> _COLUMN_BITS:
                return -1
            packed = (row << _COLUMN_BITS) | col
        except (TypeError, ValueError):
            return -1
        keys = self._keys
        # Ranges are read cell after cell down a column: the next key is most often as far
        # after the last one found as that one was after the one before.
        guess = self._hint + self._stride
        if 0 <= guess < len(keys) and keys[guess] == packed:
            self._hint = guess
            return guess
        at = bisect_left(keys, packed)
        if at < len(keys) and keys[at] == packed:
            self._stride, self._hint = at - self._hint, at
            return at
        return -1

    def _cell(self, at: int) -> Cell:
        value: Any = self._values[at]
        index = self._formats[at]
        if index == _OBJECT:
            return value  # type: ignore[no-any-return]
        row, col = self._keys[at] >> _COLUMN_BITS, self._keys[at] & _COLUMN_MASK
        return built_cell(self._sheet, row, col, value, None, self._format_names[index], None)

    def _as_dict(self) -> dict[tuple[int, int], Cell]:
        if self._dict is None:
            self._dict = {(c.row, c.col): c for c in map(self._cell, range(len(self._keys)))}
            self._keys, self._values, self._formats = array("q"), [], array("H")
        return self._dict

    def __getitem__(self, key: tuple[int, int]) -> Cell:
        if self._dict is not None:
            return self._dict[key]
        at = self._position(key)
        if at < 0:
            raise KeyError(key)
        return self._cell(at)

    def get(self, key: tuple[int, int], default: Cell | None = None) -> Cell | None:  # type: ignore[override]
        # _position and _cell written out: the evaluator reads ranges through here, a million
        # calls on a million-row sheet.
        if self._dict is not None:
            return self._dict.get(key, default)
        try:
            row, col = key
            if not 0 < col < 1 << _COLUMN_BITS or not 0 <= row < _MAX_PACKED >> _COLUMN_BITS:
                return default
            packed = (row << _COLUMN_BITS) | col
        except (TypeError, ValueError):
            return default
        keys = self._keys
        at = self._hint + self._stride
        if not (0 <= at < len(keys) and keys[at] == packed):
            found = bisect_left(keys, packed)
            if found == len(keys) or keys[found] != packed:
                return default
            self._stride, at = found - self._hint, found
        self._hint = at
        index = self._formats[at]
        if index == _OBJECT:
            return self._values[at]  # type: ignore[return-value]
        value: CellValue = self._values[at]  # type: ignore[assignment]
        return built_cell(self._sheet, row, col, value, None, self._format_names[index], None)

    def stored_cells(self) -> Iterator[Cell]:
        """The cells held as objects (every formula and array anchor among them), in order."""
        if self._dict is not None:
            yield from self._dict.values()
            return
        for value, index in zip(self._values, self._formats, strict=True):
            if index == _OBJECT:
                yield value  # type: ignore[misc]

    def column_values(self, col: int, first: int, last: int) -> list[CellValue] | None:
        """The stored value of each cell of column ``col``, rows ``first``..``last`` (None where
        there is no cell), found for the whole range at once and no Cell built; None once the
        store has become a dict (then read the cells)."""
        if self._dict is not None or not 0 <= first <= last < _MAX_PACKED >> _COLUMN_BITS:
            return None
        out: list[CellValue] = [None] * (last - first + 1)
        if not 0 < col <= _COLUMN_MASK or not self._keys:
            return out
        keys = np.frombuffer(self._keys, dtype=np.int64)
        wanted = (np.arange(first, last + 1, dtype=np.int64) << _COLUMN_BITS) | col
        at = np.minimum(np.searchsorted(keys, wanted), len(keys) - 1)
        hit = np.flatnonzero(keys[at] == wanted)
        positions = at[hit]
        formats = np.frombuffer(self._formats, dtype=np.uint16)
        objects = np.flatnonzero(formats[positions] == _OBJECT).tolist()
        del keys, formats  # views pin their arrays: they could not grow while one exists
        # C-level maps rather than a Python loop per cell (a million-row column):
        found: list[Any] = list(map(self._values.__getitem__, positions.tolist()))
        for at_object in objects:
            found[at_object] = found[at_object].value
        if len(found) == len(out):
            return found
        for offset, value in zip(hit.tolist(), found, strict=True):
            out[offset] = value
        return out

    def constant_values(
        self, formulas: bool = False
    ) -> Iterator[tuple[tuple[int, int], CellValue]]:
        """(row, col) and value of every cell with no formula (``formulas``: of every cell, a
        formula's stored value), in order, no Cell built for the packed ones."""
        if self._dict is not None:
            for key, cell in self._dict.items():
                if formulas or cell.formula is None:
                    yield key, cell.value
            return
        for packed, value, index in zip(self._keys, self._values, self._formats, strict=True):
            if index == _OBJECT:
                if not formulas and value.formula is not None:  # type: ignore[union-attr]
                    continue
                value = value.value  # type: ignore[union-attr]
            yield (packed >> _COLUMN_BITS, packed & _COLUMN_MASK), value  # type: ignore[misc]

    def __contains__(self, key: object) -> bool:
        if self._dict is not None:
            return key in self._dict
        return self._position(key) >= 0  # type: ignore[arg-type]

    def __setitem__(self, key: tuple[int, int], cell: Cell) -> None:
        if self._dict is None:
            row, col = key
            packed = (row << _COLUMN_BITS) | col if 0 < col < 1 << _COLUMN_BITS else -1
            if self._last < packed < _MAX_PACKED:
                self._keys.append(packed)
                self._values.append(cell)
                self._formats.append(_OBJECT)
                self._last = packed
                return
            at = self._position(key) if packed >= 0 else -1
            if at >= 0:
                self._values[at] = cell
                self._formats[at] = _OBJECT
                return
        self._as_dict()[key] = cell

    def __delitem__(self, key: tuple[int, int]) -> None:
        del self._as_dict()[key]

    def __len__(self) -> int:
        return len(self._dict) if self._dict is not None else len(self._keys)

    def __iter__(self) -> Iterator[tuple[int, int]]:
        if self._dict is not None:
            yield from self._dict
            return
        for packed in self._keys:
            yield (packed >> _COLUMN_BITS, packed & _COLUMN_MASK)

    def values(self) -> ValuesView[Cell]:
        return _Values(self)

    def items(self) -> ItemsView[tuple[int, int], Cell]:
        return _Items(self)

    def iter_cells(self) -> Iterator[Cell]:
        """Every cell in insertion order, built as it is reached."""
        if self._dict is not None:
            yield from self._dict.values()
            return
        sheet, names = self._sheet, self._format_names
        for packed, value, index in zip(self._keys, self._values, self._formats, strict=True):
            if index == _OBJECT:
                yield value  # type: ignore[misc]
                continue
            yield built_cell(
                sheet,
                packed >> _COLUMN_BITS,
                packed & _COLUMN_MASK,
                value,  # type: ignore[arg-type]
                None,
                names[index],
                None,
            )


class _Values(ValuesView[Cell]):
    _mapping: CompactCells

    def __iter__(self) -> Iterator[Cell]:
        return self._mapping.iter_cells()


class _Items(ItemsView[tuple[int, int], Cell]):
    _mapping: CompactCells

    def __iter__(self) -> Iterator[tuple[tuple[int, int], Cell]]:
        for cell in self._mapping.iter_cells():
            yield (cell.row, cell.col), cell
