"""What the words around a regression say its x and y are: headers, statistic labels, titles.

The **header** of each range is the text above a column of data (or left of a row); the headers
of the columns (rows) beside it are those a range moved by one would read. The statements
(:mod:`auditor.locate.words`) come from the labels of the regression's statistics, its block's
title and its chart's title, or else from the titles around its data and the sheets' names.
The result is a :class:`Meaning`, plain data judged in :mod:`auditor.diagnose.roles_words`.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import lru_cache
from itertools import repeat
from operator import attrgetter

from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.locate.meaning_texts import block_texts, clean, sheet_texts
from auditor.locate.spec import RegressionSpec
from auditor.locate.words import (
    Statement,
    read_slash_rate,
    read_statement,
    read_unit,
    shared,
    tokens,
    units_of,
)
from auditor.read.workbook import Sheet, Workbook

HEADER_ROWS_ABOVE = 3  # a header may sit a row or two above the data (a units row between)
NEIGHBOUR_REACH = 2  # columns (rows) either side searched for the quantity the words name
SAMPLE = 200  # cells looked at to tell a column of data
_VALUE = attrgetter("value")


@dataclass(frozen=True)
class Header:
    """The text naming one range (or a range beside it) and the cell it is in."""

    text: str
    cell: str
    ref: Ref  # the range it names
    words: frozenset[str]


@dataclass
class Meaning:
    """What the words around one regression say (empty lists where they say nothing)."""

    x: Header | None = None
    y: Header | None = None
    x_beside: list[Header] = field(default_factory=list)  # headers of the columns beside x
    y_beside: list[Header] = field(default_factory=list)
    statements: list[Statement] = field(default_factory=list)


def header_of(workbook: Workbook, ref: Ref) -> Header | None:
    """The text above a one-column range (left of a one-row range), within a few cells."""
    sheet = workbook.sheet(ref.sheet)
    if sheet is None or ref.external:
        return None
    if ref.cols == 1 and ref.rows > 1:
        spots = [(r, ref.c1) for r in range(ref.r1 - 1, max(0, ref.r1 - 1 - HEADER_ROWS_ABOVE), -1)]
    elif ref.rows == 1 and ref.cols > 1:
        spots = [(ref.r1, c) for c in range(ref.c1 - 1, max(0, ref.c1 - 1 - HEADER_ROWS_ABOVE), -1)]
    else:
        return None
    for index, (row, col) in enumerate(spots):
        cell = sheet.get(row, col)
        if cell is None or cell.value is None:
            continue
        text = clean(cell.value) if not cell.formula else None
        if text is None:
            return None  # a number or formula above the data: no header, or data continuing
        if text[0] in "([" and index + 1 < len(spots):  # a row of units under the names
            name = sheet.get(*spots[index + 1])
            named = clean(name.value) if name is not None and not name.formula else None
            text = f"{named} {text}" if named else text
        words = tokens(text)
        return (
            Header(text, f"{sheet.name}!{column_letter(col)}{row}", ref, words) if words else None
        )
    return None


@lru_cache(maxsize=1024)
def _picks(count: int) -> tuple[int, ...]:
    """The positions of a range of ``count`` cells looked at: all, or SAMPLE + 1 spread over it."""
    if count <= SAMPLE:
        return tuple(range(count))
    return tuple(i * (count - 1) // SAMPLE for i in range(SAMPLE + 1))


def _mostly_numbers(sheet: Sheet, ref: Ref) -> bool:
    """Do at least half the cells of a one-column (one-row) range hold numbers? Judged on at
    most SAMPLE cells spread over it: a range of a million rows is not read whole. The cells
    are looked up in one pass and counted by type, not one method call each."""
    picks = _picks(ref.rows * ref.cols)
    keys: Iterable[tuple[int, int]]
    if ref.cols == 1:
        keys = zip(map(ref.r1.__add__, picks), repeat(ref.c1))
    else:
        keys = ((ref.r1 + k // ref.cols, ref.c1 + k % ref.cols) for k in picks)
    kinds = Counter(map(type, map(_VALUE, filter(None, map(sheet.cells.get, keys)))))
    numbers = sum(
        n for kind, n in kinds.items() if issubclass(kind, (int, float)) and kind is not bool
    )
    return 2 * numbers >= len(picks)


def beside(workbook: Workbook, ref: Ref, other: Ref) -> list[Header]:
    """Headers of the numeric columns (rows) within reach of ``ref`` over the same rows
    (columns), nearest first, ``other`` (the regression's other range) left out."""
    sheet = workbook.sheet(ref.sheet)
    if sheet is None or ref.external:
        return []
    found = []
    for step in range(1, NEIGHBOUR_REACH + 1):
        for sign in (-1, 1):
            if ref.cols == 1 and ref.rows > 1:
                near = Ref(ref.sheet, ref.r1, ref.c1 + sign * step, ref.r2, ref.c1 + sign * step)
            elif ref.rows == 1 and ref.cols > 1:
                near = Ref(ref.sheet, ref.r1 + sign * step, ref.c1, ref.r1 + sign * step, ref.c2)
            else:
                return []
            if min(near.r1, near.c1) < 1 or _same(near, other):
                continue
            # The header first: a few cells, where telling a column of data samples up to 200.
            header = header_of(workbook, near)
            if header is not None and _mostly_numbers(sheet, near):
                found.append(header)  # the header of a column of data beside it
    return found


def _same(a: Ref, b: Ref) -> bool:
    return a.sheet.lower() == b.sheet.lower() and (a.r1, a.c1, a.r2, a.c2) == (
        b.r1,
        b.c1,
        b.r2,
        b.c2,
    )


def read_meaning(workbook: Workbook, spec: RegressionSpec) -> Meaning:
    """The words of one simple regression: its headers, those beside, and what its statistic
    labels and the titles around it say. The block's own words (its labels, its title, its
    chart's title) speak for it when they name a quantity of its table; the sheets' titles and
    names only when they do not (a results sheet's top row may title other blocks)."""
    meaning = Meaning()
    if spec.x_columns != 1 or spec.pasted is not None:
        return meaning  # several x columns (or a pasted table): no single x to name
    meaning.x, meaning.y = header_of(workbook, spec.x), header_of(workbook, spec.y)
    if meaning.x is None or meaning.y is None:
        return meaning  # a range without a header: nothing to compare the words with
    meaning.x_beside = beside(workbook, spec.x, spec.y)
    meaning.y_beside = beside(workbook, spec.y, spec.x)
    headers = [meaning.x, meaning.y, *meaning.x_beside, *meaning.y_beside]
    named = frozenset(w for h in headers for w in h.words)
    units = [u for u in (units_of(h.text) for h in headers) if u]
    header_cells = {h.cell for h in headers}  # a header names its column: it says no roles
    around = sheet_texts(workbook, spec, [(h.cell, h.ref) for h in (meaning.x, meaning.y)])
    block = [s for s in _statements(block_texts(workbook, spec), units)
             if s.cell not in header_cells]  # fmt: skip
    sheet = [s for s in _statements(around, units) if s.cell not in header_cells]
    own = [s for s in block if shared(s.y_words | s.x_words, named)]
    meaning.statements = own or _unique(block + sheet)
    return meaning


def _statements(texts: list[tuple[str, str, str]], units: list[frozenset[str]]) -> list[Statement]:
    out = []
    for text, where, kind in texts:
        if kind == "unit":
            statement = read_unit(text, where)
            if statement is not None and statement.y_words not in units:
                statement = None  # brackets that hold no unit of the table: "(1/x²)", "(b0)"
        else:
            statement = read_statement(text, where, kind == "rate")
        if statement is None and kind == "rate":
            statement = read_slash_rate(text, where, units)
        if statement is not None:
            out.append(statement)
    return _unique(out)


def _unique(statements: list[Statement]) -> list[Statement]:
    seen: set[tuple[str, str]] = set()
    out = []
    for statement in statements:
        key = (statement.text.lower(), statement.strength)
        if key not in seen:
            seen.add(key)
            out.append(statement)
    return out
