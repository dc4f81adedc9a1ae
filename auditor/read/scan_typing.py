"""Cells from the fields the fast scanner found: the hot loop, and the general case.

The values are typed exactly as :class:`auditor.read.sheet.SheetReader` types them (the same
tests, in the same order, on the same text) and formulas go through that reader's own
``_formula``, so shared formulas, array blocks and data tables are handled by one piece of code.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, Protocol

from auditor.read.book import COLUMN_CACHE, BookState, column_number
from auditor.read.numbers import COLUMN_BITS
from auditor.read.scan_markup import Node, Unrecognised, plain_text, unescape
from auditor.read.scan_plain import PlainFields, plain_cells, typed_run
from auditor.read.sheet import (
    NOT_A_NUMBER,
    _row_number,
    built_cell,
    cell_position,
    typed_value,
)
from auditor.read.workbook import Cell, CellValue, Sheet, SheetIndex


class SheetScanner(Protocol):
    """What the cell maker needs of :class:`auditor.read.scan.SheetScanner`."""

    sheet: Sheet
    known_attributes: dict[str, dict[str, str]]

    def attributes_of(self, text: str) -> dict[str, str]: ...

    def _formula(
        self, element: Any, row: int, col: int, value: CellValue
    ) -> tuple[str | None, str | None]: ...

    def formula_of(
        self,
        attribute: Callable[[str], str | None],
        inner: str | None,
        row: int,
        col: int,
        value: CellValue,
    ) -> tuple[str | None, str | None]: ...


_new_tuple = tuple.__new__
# The fields of one match of the scanner's field pattern: a row's number, attributes and "/",
# then a cell's column letters, row digits, s, t, "<f" marker, f attributes, f text, v text,
# "<is>" marker, inline text. Absent groups are "".
Fields = tuple[str, str, str, str, str, str, str, str, str, str, str, str, str]


class CellMaker:
    """Turns scanned rows into :class:`Cell` objects in the scanner's sheet."""

    def __init__(self, book: BookState, scanner: SheetScanner) -> None:
        self.book = book
        self.scanner = scanner
        self.cells = scanner.sheet.cells
        self.row_number = 0
        self.row_text = "0"
        self.max_row = self.max_col = 0
        self.index = SheetIndex()
        self.made = 0  # cells put in the store, each time one is (a cell given twice: twice)
        book.styles.setdefault("", book.styles[None])  # "" is how the pattern says "no s"

    def plain(self, found: list[PlainFields], row_attributes: list[str], last_row: str) -> None:
        """A run of rows of plain cells (numbers and shared strings, no formula), typed a list
        at a time (:mod:`auditor.read.scan_plain`); ``last_row``: the number of the run's last
        row, as written."""
        for text in set(row_attributes).difference(self.scanner.known_attributes):
            if text and "r" in self.scanner.attributes_of(text):
                raise Unrecognised("attribute 'r' given twice")
        self.row_number = int(last_row)
        self.row_text = last_row if last_row[0] != "0" else str(self.row_number)
        if not found:
            return
        run = typed_run(self.book, found)
        name, cells, index = self.scanner.sheet.name, self.cells, self.index
        keys = run.keys()
        add_constants = getattr(cells, "add_constants", None)  # a CompactCells store
        if add_constants is None:
            made = plain_cells(name, run)
            cells.update(zip(zip(run.rows, run.cols, strict=True), made, strict=True))
            if run.shared:
                index.texts.extend(cell for cell in made if type(cell.value) is str)
        else:
            add_constants(keys, run.values, run.formats)
            if run.shared:
                index.texts.extend(
                    built_cell(name, row, col, value, None, number_format, None)
                    for row, col, value, number_format in zip(
                        run.rows, run.cols, run.values, run.formats, strict=True
                    )
                    if type(value) is str
                )
        self.made += len(run.rows)
        index.numbers.add_typed(run.number_keys(keys), run.numbers)
        self.max_row = max(self.max_row, run.max_row)
        self.max_col = max(self.max_col, run.max_col)

    def rows(self, found: list[Fields]) -> None:
        """Ordinary rows cell by cell: numbers and shared strings inline, anything else through
        :meth:`general`."""
        name, cells, book = self.scanner.sheet.name, self.cells, self.book
        strings, dates, styles, style_of = book.strings, book.dates, book.styles, book.style_of
        columns, known = COLUMN_CACHE, self.scanner.known_attributes
        add_constant = getattr(cells, "add_constant", None)  # a CompactCells store
        index = self.index
        texts, number_keys, number_values = index.texts, index.numbers.keys, index.numbers.values
        row_number, row_text = self.row_number, self.row_text
        max_row, max_col = self.max_row, self.max_col
        for (
            rr,
            rattrs,
            _,
            letters,
            digits,
            s,
            t,
            fmark,
            fattrs,
            ftext,
            vtext,
            imark,
            itext,
        ) in found:
            if rr:
                row_number = int(rr)
                row_text = rr if rr[0] != "0" else str(row_number)
                if rattrs and rattrs not in known and "r" in self.scanner.attributes_of(rattrs):
                    raise Unrecognised("attribute 'r' given twice")
                continue
            row = row_number if digits == row_text else int(digits)
            col = columns.get(letters) or column_number(letters)
            if fmark and not imark:
                if not self.formula_cell(row, col, t, s, fattrs, ftext, vtext):
                    continue
            elif imark and not fmark and t == "inlineStr":  # a label, as typed_value gives it
                number_format = styles.get(s) or style_of(s or None)
                cell = _new_tuple(Cell, (name, row, col, itext, None, number_format, None))
                cells[(row, col)] = cell
                self.made += 1
                texts.append(cell)
            elif fmark or imark or (t and t != "s" and t != "n"):
                formula_el = None
                if fmark:
                    formula_el = Node("f", self.scanner.attributes_of(fattrs))
                    formula_el.text = unescape(ftext) or None
                if not self.general(
                    row, col, t or None, s or None, formula_el, vtext, itext if imark else None
                ):
                    continue
            elif not vtext:
                continue
            else:
                value: CellValue
                if t == "s":
                    value = strings[int(vtext)]
                elif "." in vtext or "E" in vtext or "e" in vtext or (s in dates):
                    value = float(vtext)
                    if value - value != 0.0:
                        value = NOT_A_NUMBER
                else:
                    value = int(vtext)
                number_format = styles.get(s) or style_of(s or None)
                if add_constant is not None:
                    add_constant(row, col, value, number_format)
                    cell = None
                else:
                    cell = _new_tuple(Cell, (name, row, col, value, None, number_format, None))
                    cells[(row, col)] = cell
                self.made += 1
                if t == "s":
                    texts.append(
                        cell or built_cell(name, row, col, value, None, number_format, None)
                    )
                elif value is not NOT_A_NUMBER:
                    number_keys.append(row << COLUMN_BITS | col)
                    number_values.append(value)  # type: ignore[arg-type]
            if col > max_col:
                max_col = col
            if row > max_row:
                max_row = row
        self.row_number, self.row_text = row_number, row_text
        self.max_row, self.max_col = max_row, max_col

    def formula_cell(
        self, row: int, col: int, t: str, s: str, fattrs: str, ftext: str, vtext: str
    ) -> bool:
        """A cell with a formula and no inline text, from its fields: :meth:`general` without
        building the ``<f>`` element (a workbook saved by a spreadsheet application is mostly
        formulas: 37,000 of the real-world set's 149,000 cells). False when it holds nothing."""
        book, scanner = self.book, self.scanner
        value: CellValue
        if vtext and (not t or t == "n"):
            if "." in vtext or "E" in vtext or "e" in vtext or s in book.dates:
                value = float(vtext)
                if value - value != 0.0:
                    value = NOT_A_NUMBER
            else:
                value = int(vtext)
        else:
            value = typed_value(book, t or None, s or None, vtext, None)
        attributes = scanner.known_attributes.get(fattrs)
        if attributes is None:
            attributes = scanner.attributes_of(fattrs)
        formula, array_ref = scanner.formula_of(
            attributes.get, unescape(ftext) or None, row, col, value
        )
        if value is None and formula is None:
            return False
        number_format = book.styles.get(s) or book.style_of(s or None)
        cell = _new_tuple(
            Cell, (scanner.sheet.name, row, col, value, formula, number_format, array_ref)
        )
        self.cells[(row, col)] = cell
        self.made += 1
        self.index.add_cell(cell)
        return True

    def node_row(self, row_node: Node) -> None:
        """A row the structural pattern did not accept, tokenised: read as the lxml reader
        reads a ``<row>`` element."""
        r_attr = row_node.get("r")
        row_number = _row_number(r_attr) if r_attr is not None else self.row_number + 1
        row_text = str(row_number)
        col_number = 0
        for c in row_node.children:
            if c.tag != "c":
                continue
            row, col = cell_position(c.get("r"), row_number, row_text, col_number)
            col_number = col
            text = formula_el = inline = None
            for child in c.children:
                if child.tag == "v":
                    text = child.text
                elif child.tag == "f":
                    formula_el = child
                elif child.tag == "is":
                    inline = child
            inline_text = None if inline is None else plain_text(inline)
            if self.general(row, col, c.get("t"), c.get("s"), formula_el, text, inline_text):
                self.max_col = max(self.max_col, col)
                self.max_row = max(self.max_row, row)
        self.row_number, self.row_text = row_number, row_text

    def general(
        self,
        row: int,
        col: int,
        t: str | None,
        s: str | None,
        formula_el: Node | None,
        text: str | None,
        inline: str | None,
    ) -> bool:
        """Any cell, typed as the lxml reader types it; False when it holds nothing."""
        book = self.book
        value = typed_value(book, t, s, text, inline)
        formula: str | None = None
        array_ref: str | None = None
        if formula_el is not None:
            formula, array_ref = self.scanner._formula(formula_el, row, col, value)
        if value is None and formula is None:
            return False
        cell = built_cell(
            self.scanner.sheet.name,
            row,
            col,
            value,
            formula,
            book.styles.get(s) or book.style_of(s),
            array_ref,
        )
        self.cells[(row, col)] = cell
        self.made += 1
        self.index.add_cell(cell)
        return True

    def finish(self) -> None:
        sheet = self.scanner.sheet
        sheet.max_row, sheet.max_col = self.max_row, self.max_col
        self.index.made, self.index.store = self.made, sheet.cells
        sheet.index = self.index
