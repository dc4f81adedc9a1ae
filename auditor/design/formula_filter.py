"""Which formulas can hold something, judged from their text before any tree is walked.

A parsed formula is its cell's text with each defined name replaced by the text that name refers
to (and so on, for names used inside names). So when a thing can only come from certain text (a
link to another workbook is written with a bracket, a product with ``*``), a formula can hold it
only if its own text has that text, or it mentions a defined name that can lead to it. Testing
the text first lets a scan over every formula of a large model walk only those few trees.

The test is a superset, never a subset: a name counts when its text, or the name of another
such name, appears in it (case-insensitive, wherever it stands), whatever the scope.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Iterator, Mapping
from typing import TypeVar

from auditor.read.workbook import Cell, DefinedName, Workbook

Key = tuple[str, int, int]  # (sheet, row, column), as the parsed formulas are keyed
Item = TypeVar("Item")


def leading_names(names: list[DefinedName], written: Callable[[str], bool]) -> list[str]:
    """The defined names whose text can lead to what ``written`` finds: their own text, or the
    name of a name that can, inside it (to a fixed point)."""
    leading = {name.name.upper() for name in names if written(name.refers_to)}
    grown = True
    while grown:
        grown = False
        for name in names:
            upper = name.name.upper()
            if upper not in leading and any(other in name.refers_to.upper() for other in leading):
                leading.add(upper)
                grown = True
    return sorted(leading)


def may_hold(workbook: Workbook, written: Callable[[str], bool]) -> Callable[[str], bool]:
    """A test on a formula's text, true for every formula whose tree can hold what ``written``
    finds in text: its own text does, or it mentions a name that can lead to it."""
    names = leading_names(workbook.names, written)
    if not names:
        return written
    mentioned = re.compile("|".join(re.escape(name) for name in names), re.IGNORECASE)
    return lambda text: written(text) or mentioned.search(text) is not None


def formulas_that_may_hold(
    parsed: Mapping[Key, Item], workbook: Workbook | None, written: Callable[[str], bool]
) -> Iterator[tuple[Key, Item]]:
    """The parsed formulas, in their order, whose trees can hold what ``written`` finds in
    text (every one when there is no workbook to read the texts from)."""
    if workbook is None:
        yield from parsed.items()
        return
    test = may_hold(workbook, written)
    cell_at = CellLookup(workbook)
    for key, node in parsed.items():
        cell = cell_at(*key)
        if cell is None or cell.formula is None or test(cell.formula):
            yield key, node


class CellLookup:
    """``workbook.cell(sheet, row, col)`` for the many keys of a scan over every formula: each
    sheet is found by its name once, not once per cell."""

    def __init__(self, workbook: Workbook) -> None:
        self.workbook = workbook
        self._cells: dict[str, Mapping[tuple[int, int], Cell]] = {}

    def __call__(self, sheet: str, row: int, col: int) -> Cell | None:
        cells = self._cells.get(sheet)
        if cells is None:
            found = self.workbook.sheet(sheet)
            cells = self._cells[sheet] = found.cells if found is not None else {}
        return cells.get((row, col))
