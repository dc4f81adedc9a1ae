"""Reference operands of formula text: A1 and R1C1 notation parsed into grid coordinates.

``'My Data'!$B$2:B9`` becomes a :class:`Reference` (its sheet prefix and two :class:`Corner`s with
their ``$`` flags); whole columns and rows have no row or no column. :mod:`auditor.formula.r1c1`
rewrites formulas with these.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

from auditor.formula.tokens import _split_outside_quotes
from auditor.grid import A1_CELL, A1_COLUMN, A1_ROW, MAX_COL, MAX_ROW, column_index

_OFFSET = r"(\[-?\d+\]|\d+)?"
_RC_CELL = re.compile(rf"^R{_OFFSET}C{_OFFSET}$", re.I)
_RC_ROW = re.compile(rf"^R{_OFFSET}$", re.I)
_RC_COL = re.compile(rf"^C{_OFFSET}$", re.I)


@dataclass(frozen=True)
class Corner:
    """One end of a reference, in absolute grid coordinates (1-based) with its ``$`` flags.

    ``row`` is None for a whole column (``B:B``), ``col`` None for a whole row (``3:3``).
    """

    row: int | None
    col: int | None
    row_absolute: bool = False
    col_absolute: bool = False


@dataclass(frozen=True)
class Reference:
    """A reference operand as written: its sheet prefix (with the ``!``) and one or two corners."""

    prefix: str
    start: Corner
    end: Corner | None = None

    @property
    def sheet(self) -> str | None:
        """The sheet name, unquoted and without a workbook marker; None on the formula's sheet."""
        if not self.prefix:
            return None
        return _split_prefix(self.prefix)[1]

    @property
    def external(self) -> str | None:
        """``[1]`` or ``[other.xlsx]`` for a reference into another workbook."""
        return _split_prefix(self.prefix)[0] if self.prefix else None

    @property
    def corners(self) -> tuple[Corner, ...]:
        return (self.start,) if self.end is None else (self.start, self.end)

    @property
    def anchored(self) -> bool:
        """Any ``$`` in it: a part that does not move when the formula is copied."""
        return any(c.row_absolute or c.col_absolute for c in self.corners)


Rewrite = Callable[[Reference], str | None]  # the new text of a reference; None keeps it


def _split_prefix(prefix: str) -> tuple[str | None, str]:
    """``'[1]My Data'!`` -> ("[1]", "My Data")."""
    body = prefix[:-1] if prefix.endswith("!") else prefix
    if len(body) >= 2 and body[0] == body[-1] == "'":
        body = body[1:-1].replace("''", "'")
    if body.startswith("[") and "]" in body:
        cut = body.index("]") + 1
        return body[:cut], body[cut:]
    return None, body


def _with_prefix(part: str) -> tuple[str, str]:
    pieces = _split_outside_quotes(part, "!")
    if len(pieces) == 1:
        return "", part
    return "!".join(pieces[:-1]) + "!", pieces[-1]


def _a1_corner(text: str, kind: str) -> Corner | None:
    if kind == "cell" and (m := A1_CELL.match(text)):
        row, col = int(m.group(4)), column_index(m.group(2))
        if 1 <= row <= MAX_ROW and 1 <= col <= MAX_COL:
            return Corner(row, col, m.group(3) == "$", m.group(1) == "$")
    if kind == "col" and (m := A1_COLUMN.match(text)):
        col = column_index(m.group(2))
        return Corner(None, col, False, m.group(1) == "$") if col <= MAX_COL else None
    if kind == "row" and (m := A1_ROW.match(text)):
        row = int(m.group(2))
        return Corner(row, None, m.group(1) == "$", False) if 1 <= row <= MAX_ROW else None
    return None


@lru_cache(maxsize=16_384)
def parse_a1(operand: str) -> Reference | None:
    """A reference operand in A1 notation, or None for a name, table reference or error.
    (Kept per text: references are immutable and the checks rewrite the same formulas often.)"""
    parts = _split_outside_quotes(operand, ":")
    if len(parts) > 2:
        return None
    prefix, first = _with_prefix(parts[0])
    if len(parts) == 1:
        corner = _a1_corner(first, "cell")
        return Reference(prefix, corner) if corner else None
    second_prefix, second = _with_prefix(parts[1])
    if second_prefix and second_prefix.lower() != prefix.lower():
        return None  # Sheet1!A1:Sheet2!B2 (a 3-D span): left as written
    for kind in ("cell", "col", "row"):
        start, end = _a1_corner(first, kind), _a1_corner(second, kind)
        if start and end:
            return Reference(prefix, start, end)
    return None


def _rc_part(text: str | None, here: int) -> tuple[int, bool]:
    """``[-2]`` -> (here - 2, relative); ``5`` -> (5, absolute); empty -> (here, relative)."""
    if not text:
        return here, False
    if text.startswith("["):
        return here + int(text[1:-1]), False
    return int(text), True


def _rc_corner(text: str, kind: str, row: int, col: int) -> Corner | None:
    pattern = {"cell": _RC_CELL, "row": _RC_ROW, "col": _RC_COL}[kind]
    m = pattern.match(text)
    if not m:
        return None
    if kind == "cell":
        (r, r_abs), (c, c_abs) = _rc_part(m.group(1), row), _rc_part(m.group(2), col)
        return Corner(r, c, r_abs, c_abs)
    if kind == "row":
        r, r_abs = _rc_part(m.group(1), row)
        return Corner(r, None, r_abs, False)
    c, c_abs = _rc_part(m.group(1), col)
    return Corner(None, c, False, c_abs)


def parse_r1c1(operand: str, row: int, col: int) -> Reference | None:
    """A reference operand in R1C1 notation, resolved against the cell (row, col) holding it."""
    parts = _split_outside_quotes(operand, ":")
    if len(parts) > 2:
        return None
    prefix, first = _with_prefix(parts[0])
    if len(parts) == 1:
        corner = _rc_corner(first, "cell", row, col)
        return Reference(prefix, corner) if corner else None
    _, second = _with_prefix(parts[1])
    for kind in ("cell", "row", "col"):
        start, end = _rc_corner(first, kind, row, col), _rc_corner(second, kind, row, col)
        if start and end:
            return Reference(prefix, start, end)
    return None
