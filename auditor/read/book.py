"""What the sheets of one workbook share while the one-pass reader reads them."""

from __future__ import annotations

import zipfile
from dataclasses import dataclass, field
from typing import Any

from auditor.errors import UnreadableWorkbook
from auditor.grid import MAX_COL, column_index
from auditor.read.parts import plain_text

MAX_ARRAY_CELLS = 1_000_000  # cells covered by array-formula blocks, per workbook


COLUMN_CACHE: dict[str, int] = {}  # valid column letters only: at most MAX_COL entries


def column_number(letters: str) -> int:
    index = COLUMN_CACHE.get(letters)
    if index is None:
        if not letters.isalpha() or not letters.isascii() or not letters.isupper():
            raise ValueError(f"bad column letters {letters!r}")
        index = column_index(letters)
        if not 1 <= index <= MAX_COL:
            raise ValueError(f"column {letters!r} is beyond the last column XFD")
        COLUMN_CACHE[letters] = index
    return index


def cell_bounds(ref: str) -> tuple[int, int, int, int]:
    """``B2:D9`` -> (2, 2, 9, 4), corners sorted; ValueError for letters beyond the grid."""
    first, _, last = ref.partition(":")
    letters = first.rstrip("0123456789")
    r1, c1 = int(first[len(letters) :]), column_number(letters)
    last = last or first
    letters = last.rstrip("0123456789")
    r2, c2 = int(last[len(letters) :]), column_number(letters)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)


@dataclass
class BookState:
    """What the sheets of one workbook share while they are read, and the counts they leave."""

    archive: zipfile.ZipFile
    label: str  # the file's name, for messages
    ns: str  # "{namespace}" of SpreadsheetML in this package
    strings: list[str]
    formats: list[str]  # number format per cell style
    dates: frozenset[str]  # cell styles (as their "s" text) that format dates or durations
    styles: dict[str | None, str] = field(default_factory=dict)  # "s" text -> number format
    arrays: dict[tuple[str, int, int], tuple[int, int, int, int]] = field(default_factory=dict)
    cell_count: int = 0
    formula_count: int = 0
    valued_formulas: int = 0

    def __post_init__(self) -> None:
        self.styles.setdefault(None, self.formats[0])

    def style_of(self, s: str | None) -> str:
        """The number format of style ``s`` (memoised in ``styles``)."""
        try:
            index = int(s or 0)
            found = self.formats[index] if 0 <= index < len(self.formats) else "General"
        except ValueError:
            found = "General"
        self.styles[s] = found
        return found

    def inline_text(self, element: Any) -> str:
        return plain_text(element, self.ns)

    def add_array(self, sheet: str, ref: str) -> None:
        bounds = cell_bounds(ref)
        r1, c1, r2, c2 = bounds
        if len(self.arrays) + (r2 - r1 + 1) * (c2 - c1 + 1) > MAX_ARRAY_CELLS:
            raise UnreadableWorkbook(
                f"{self.label}: sheet {sheet!r}: array formulas cover more than "
                f"{MAX_ARRAY_CELLS:,} cells (block {ref!r}); refused as too large"
            )
        for row in range(r1, r2 + 1):
            for col in range(c1, c2 + 1):
                self.arrays[(sheet, row, col)] = bounds
