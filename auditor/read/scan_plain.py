"""A run of plain cells typed a list at a time: the fast scanner's commonest case.

Nearly every cell of a sheet of data is a plain cell: a number or a shared string, with no
formula (``<c r="B7" s="2"><v>3.25</v></c>``). The scanner finds runs of rows made only of such
cells (:mod:`auditor.read.scan`) and hands their fields here as one list; each field is turned
into numbers by ``map`` and comprehensions over the whole run rather than by a Python loop of
tests per cell. The typing is :class:`auditor.read.sheet.SheetReader`'s, test for test: a
shared string by its index, a number with a point or an exponent (or in a date style) a float,
one without an int, an infinite float the error ``#NUM!``.
"""

from __future__ import annotations

from array import array
from dataclasses import dataclass
from itertools import compress, repeat
from typing import Any, cast

import numpy as np

from auditor.read.book import COLUMN_CACHE, BookState, column_number
from auditor.read.numbers import packed_keys
from auditor.read.sheet import NOT_A_NUMBER
from auditor.read.workbook import Cell, CellValue

# The fields of a plain cell: column letters, row digits, s, t ("s", "n" or ""), v text.
PlainFields = tuple[str, str, str, str, str]
_new_tuple = tuple.__new__


@dataclass
class PlainRun:
    """A run of plain cells, typed: one entry per cell in the lists, in document order."""

    rows: list[int]
    cols: list[int]
    values: list[CellValue]
    formats: list[str]
    numbers: array[float]  # the values that are numbers (finite), in order
    is_number: list[bool] | None  # which cells ``numbers`` holds; None: every cell
    shared: bool  # some cells hold shared strings
    max_row: int
    max_col: int

    def keys(self) -> Any:
        """The packed key of every cell (:func:`auditor.read.numbers.packed_keys`)."""
        return packed_keys(self.rows, self.cols)

    def number_keys(self, keys: Any) -> Any:
        """Of ``keys`` (:meth:`keys`), those of the cells in ``numbers``."""
        return keys if self.is_number is None else keys[np.array(self.is_number, dtype=bool)]


def typed_run(book: BookState, found: list[PlainFields]) -> PlainRun:
    """The cells of a run (``found`` not empty), typed as the lxml reader types them."""
    letters, digits, s_texts, t_texts, v_texts = zip(*found, strict=True)
    rows = list(map(int, digits))
    col_of = {text: COLUMN_CACHE.get(text) or column_number(text) for text in set(letters)}
    cols = list(map(col_of.__getitem__, letters))
    format_of = {s: book.styles.get(s) or book.style_of(s or None) for s in set(s_texts)}
    shared, dates = "s" in t_texts, book.dates
    values: list[CellValue]
    if shared or not dates.isdisjoint(s_texts):
        strings = book.strings
        values = [
            strings[int(v)]
            if t == "s"
            else float(v)
            if "." in v or "E" in v or "e" in v or s in dates
            else int(v)
            for s, t, v in zip(s_texts, t_texts, v_texts, strict=True)
        ]
    else:
        values = [float(v) if "." in v or "E" in v or "e" in v else int(v) for v in v_texts]
    is_number = [t != "s" for t in t_texts] if shared else None
    # An int beyond a float raises OverflowError here: the lxml reader then reads the part.
    numbers = _floats(values if is_number is None else compress(values, is_number))
    if not _all_finite(numbers):  # 1E400: no spreadsheet holds infinity
        values = [NOT_A_NUMBER if type(v) is float and v - v != 0.0 else v for v in values]
        is_number = [type(v) is int or type(v) is float for v in values]
        numbers = _floats(compress(values, is_number))
    formats = [format_of[s] for s in s_texts]
    return PlainRun(
        rows,
        cols,
        values,
        formats,
        numbers,
        is_number,
        shared,
        max(rows),
        max(col_of.values()),
    )


def plain_cells(sheet: str, run: PlainRun) -> list[Cell]:
    """The run's cells as :class:`Cell` objects (no formula, no array block), each tuple
    filled in C from the zipped fields."""
    fields = zip(
        repeat(sheet), run.rows, run.cols, run.values, repeat(None), run.formats, repeat(None)
    )
    return list(map(_new_tuple, repeat(Cell), fields))


def _floats(values: object) -> array[float]:
    return array("d", cast("list[float]", values))


def _all_finite(numbers: array[float]) -> bool:
    return not numbers or bool(np.isfinite(np.frombuffer(numbers, dtype=np.float64)).all())
