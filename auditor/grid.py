"""The xlsx grid: its limits, A1 cell and column text, and ``Sheet!A1`` references.

One place for what every stage needs to read or write a cell address; nothing here knows about
workbooks or formulas.
"""

from __future__ import annotations

import re
from functools import lru_cache

MAX_ROW = 1_048_576  # rows of an xlsx sheet
MAX_COL = 16_384  # columns, A to XFD

# Groups: column "$", column letters, row "$", row number.
A1_CELL = re.compile(r"^(\$?)([A-Za-z]{1,3})(\$?)(\d+)$")
# Groups: "$", column letters / "$", row number (one end of a whole-column or whole-row range).
A1_COLUMN = re.compile(r"^(\$?)([A-Za-z]{1,3})$")
A1_ROW = re.compile(r"^(\$?)(\d+)$")


@lru_cache(maxsize=16_384)  # the grid's columns: addresses are written everywhere
def column_letter(col: int) -> str:
    """3 -> "C", 28 -> "AB"."""
    letters = ""
    while col > 0:
        col, rem = divmod(col - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def column_index(letters: str) -> int:
    """ "C" -> 3, "ab" -> 28 (no check against the grid's last column)."""
    index = 0
    for char in letters.upper():
        index = index * 26 + (ord(char) - 64)
    return index


def parse_cell(coord: str) -> tuple[int, int]:
    """'$B$7' -> (7, 2); ValueError for anything that is not one cell."""
    match = A1_CELL.match(coord.strip())
    if not match:
        raise ValueError(f"not a cell reference: {coord!r}")
    return int(match.group(4)), column_index(match.group(2))


def on_grid(row: int, col: int) -> bool:
    return 1 <= row <= MAX_ROW and 1 <= col <= MAX_COL


def split_cell(reference: str) -> tuple[str, str]:
    """'My Sheet!B4:B9' -> ('My Sheet', 'B4:B9'); a sheet name may itself hold '!'.

    The sheet comes back as written (the JSON contract writes it unquoted); no ``!`` gives
    ('', reference)."""
    sheet, bang, address = reference.rpartition("!")
    return (sheet, address) if bang else ("", reference)
