"""Every formula cell of a workbook parsed, each shape of formula once where that is provably
the same (auditor.locate.shared_parse).

* A cell of a shared-formula group (a column filled down and saved by a spreadsheet
  application) gets its group's anchor's tree, moved to its place.
* Formulas spelt out cell by cell (a program that writes no shared formulas: ``=B2*2``,
  ``=B3*2``, …) are one formula in R1C1 terms. The first cells of a shape are parsed as they
  are; when a third comes, the first becomes the anchor of a shared formula made for it, and each
  cell whose text is exactly the anchor's moved to its place gets the anchor's tree moved. The
  shape (the text with each cell reference's relative row and column counted from the cell) only
  finds the candidate: the text comparison decides, so two unlike formulas that share a shape
  cost a parse, never a wrong tree.
* Anything else is parsed from its text, or rebound from a parse on another sheet
  (auditor.formula.templates); every parse is kept in the workbook's parse cache.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import TYPE_CHECKING

from openpyxl.formula.translate import TranslatorError

from auditor.formula import templates
from auditor.formula.syntax import book_cache, parse
from auditor.formula.tokens import TOKENIZER_FAILURES
from auditor.grid import column_index
from auditor.locate.shared_parse import moved_tree
from auditor.read.shared_formulas import SharedFormula

if TYPE_CHECKING:
    from auditor.formula.moved import MovedTree
    from auditor.formula.nodes import Node
    from auditor.read.workbook import Cell, Workbook

_CELL = re.compile(r"(\$?)([A-Z]{1,3})(\$?)(\d+)")
_PROMOTED = ("", 0, 0)  # a skeleton whose first cell's shape is in the shapes already


def shape(text: str, row: int, col: int) -> str | None:
    """``text`` with each cell reference written relative to (``row``, ``col``) where it is
    not fixed by ``$``; None when it names no cell (its text is its shape)."""
    found = False

    def relative(match: re.Match[str]) -> str:
        nonlocal found
        found = True
        col_fixed, letters, row_fixed, digits = match.groups()
        across = letters if col_fixed else column_index(letters) - col
        down = digits if row_fixed else int(digits) - row
        return f"<{col_fixed}{across},{row_fixed}{down}>"

    moved = _CELL.sub(relative, text)
    return moved if found else None


class CellParses:
    """Parses of a workbook's formula cells (FormulaError as parse raises)."""

    def __init__(self, workbook: Workbook) -> None:
        self.workbook = workbook
        self.cache = book_cache(workbook)
        self._moved: dict[int, MovedTree | None] = {}  # by the shared group's identity
        # by (sheet, shape): the first cell's (text, row, col), then its group and tree (None:
        # the first cell's parse cannot be moved)
        self._shapes: dict[tuple[str, str], tuple[str, int, int] | _Anchored | None] = {}
        self._twice: set[tuple[str, str]] = set()  # shapes met twice, not yet anchored
        # by (sheet, skeleton): the first cell's (text, row, col), until a second comes
        self._skeletons: dict[tuple[str, str], tuple[str, int, int]] = {}

    def parse(self, cell: Cell, text: str) -> Node:
        node = self.cache.get((text, cell.sheet))
        if node is not None:
            return node
        sheet = self.workbook.sheets.get(cell.sheet)
        groups = sheet.shared if sheet is not None else None
        group = groups.group_at(cell.row, cell.col, text) if groups is not None else None
        if group is None:
            return self._by_shape(cell, text)
        key = id(group)
        if key not in self._moved:
            self._moved[key] = moved_tree(group, cell.sheet, self.workbook)
        tree = self._moved[key]
        if tree is None:
            return parse(text, cell.sheet, self.workbook, group.tokens_at(cell.row, cell.col))
        return self._keep(text, cell, tree.at(cell.row - group.row, cell.col - group.col))

    def _keep(self, text: str, cell: Cell, node: Node) -> Node:
        self.cache[(text, cell.sheet)] = node
        return node

    def _by_shape(self, cell: Cell, text: str) -> Node:
        if templates.template(text) is not None:
            return parse(text, cell.sheet, self.workbook)  # parsed on another sheet: rebound
        # The text with its references blanked, in one pass of the pattern: until a second
        # formula of the sheet blanks the same, no shape is worked out (a sheet of formulas
        # each of its own kind costs no more than that pass).
        skeleton = _CELL.sub("\0", text)
        if skeleton == text:
            return parse(text, cell.sheet, self.workbook)  # no cell named: its text is its shape
        mine = (text, cell.row, cell.col)
        first = self._skeletons.setdefault((cell.sheet, skeleton), mine)
        if first is mine:
            return parse(text, cell.sheet, self.workbook)  # the first of its skeleton
        if first is not _PROMOTED:  # the second: the first's shape is known from now on
            self._skeletons[(cell.sheet, skeleton)] = _PROMOTED
            self._shapes.setdefault((cell.sheet, shape(*first) or ""), first)
        key = (cell.sheet, shape(text, cell.row, cell.col) or "")
        if key not in self._shapes:
            self._shapes[key] = (text, cell.row, cell.col)  # the first of its shape
            return parse(text, cell.sheet, self.workbook)
        entry = self._shapes[key]
        if isinstance(entry, tuple):
            # Making an anchor costs about two parses: a shape of two cells parses both; from
            # the third on, the first becomes the anchor.
            if key not in self._twice:
                self._twice.add(key)
                return parse(text, cell.sheet, self.workbook)
            entry = self._shapes[key] = self._anchor(*entry, cell.sheet)
        if isinstance(entry, _Anchored):
            group, tree = entry.group, entry.tree
            try:
                same = group.at(cell.row, cell.col) == text
            except TranslatorError:
                same = False  # its references would leave the sheet: not this shape's cell
            if same:
                return self._keep(text, cell, tree.at(cell.row - group.row, cell.col - group.col))
        return parse(text, cell.sheet, self.workbook)

    def _anchor(self, text: str, row: int, col: int, sheet: str) -> _Anchored | None:
        try:
            group = SharedFormula(text, row, col)
        except TOKENIZER_FAILURES:
            return None
        tree = moved_tree(group, sheet, self.workbook)
        return None if tree is None else _Anchored(group, tree)


@dataclass(frozen=True)
class _Anchored:
    """A shape's first cell as the anchor of a shared formula, and its tree ready to move."""

    group: SharedFormula
    tree: MovedTree
