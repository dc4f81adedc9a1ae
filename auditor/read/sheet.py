"""Streaming one worksheet part: the hot loop of the one-pass reader (:mod:`auditor.read.stream`).

Each ``<row>`` is parsed by lxml, its ``<c>`` children are turned into :class:`Cell` objects, and
the row is dropped from the tree, so that memory holds the cells and not the XML. The loop is
written out flat on purpose: at a million rows every function call and attribute look-up in it
costs a visible share of the reading time.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from openpyxl.utils.datetime import from_ISO8601, to_excel

from auditor.errors import UnreadableWorkbook
from auditor.grid import column_letter
from auditor.read.book import COLUMN_CACHE, BookState, cell_bounds, column_number
from auditor.read.shared_formulas import SharedFormula, SharedGroups
from auditor.read.workbook import Cell, CellValue, ErrorValue, Sheet
from auditor.read.xmlsafe import iter_part, prune

NOT_A_NUMBER = ErrorValue("#NUM!")
MAX_CELLS = 10_000_000  # per workbook; about 2 GB as cell objects, beyond any real review file
PRUNE_EVERY = 512  # rows between drops of parsed rows from the tree (memory stays flat)

_new_tuple = tuple.__new__


def built_cell(
    sheet: str,
    row: int,
    col: int,
    value: CellValue,
    formula: str | None,
    number_format: str,
    array_ref: str | None,
) -> Cell:
    """``Cell(...)`` without the keyword handling of the named tuple's ``__new__``."""
    return _new_tuple(Cell, (sheet, row, col, value, formula, number_format, array_ref))


def cell_position(
    ref: str | None, row_number: int, row_text: str, col_number: int
) -> tuple[int, int]:
    """(row, col) of a ``<c>`` from its ``r`` attribute; without one, the column after
    ``col_number`` in its row (ECMA-376 allows both). ValueError for letters beyond XFD."""
    if ref is None:
        return row_number, col_number + 1
    # Nearly always the cell's row is the row element's: then only the letters are looked up.
    known = COLUMN_CACHE.get(ref[: -len(row_text)]) if ref.endswith(row_text) else None
    if known is not None:
        return row_number, known
    letters = ref.rstrip("0123456789")
    return int(ref[len(letters) :]), column_number(letters)


def typed_value(
    book: BookState, t: str | None, s: str | None, text: str | None, inline: str | None
) -> CellValue:
    """A cell's stored value from its ``t`` and ``s`` attributes, its ``<v>`` text and the
    plain text of its ``<is>`` (None when it has none), as a spreadsheet wrote it."""
    if not text:
        return inline if t == "inlineStr" else None
    if t is None or t == "n":
        if "." in text or "E" in text or "e" in text or (s in book.dates):
            number = float(text)
            return NOT_A_NUMBER if number - number != 0.0 else number  # 1E400: no infinity
        return int(text)
    if t == "s":
        return book.strings[int(text)]
    if t == "b":
        return bool(int(text))
    if t == "e":
        return ErrorValue(text)
    if t == "inlineStr":
        return inline
    if t == "d":
        return float(to_excel(from_ISO8601(text)))
    return text  # "str", and any type the format does not define


def _row_number(text: str) -> int:
    """A row's ``r`` attribute; "7.0" is accepted as 7, as openpyxl does."""
    try:
        return int(text)
    except ValueError:
        number = float(text)
        if not number.is_integer():
            raise ValueError(f"{text!r} is not a row number") from None
        return int(number)


class SheetReader:
    """Reads one worksheet part; keeps the counters the workbook needs afterwards."""

    def __init__(self, book: BookState, name: str) -> None:
        self.book = book
        self.sheet = Sheet(name=name)
        self.shared_formulas: dict[str, SharedFormula] = {}  # by "si"
        self.merges: list[str] = []

    def read(self, part: str) -> Sheet:
        book, name = self.book, self.sheet.name
        ns = book.ns
        row_tag, merge_tag = ns + "row", ns + "mergeCell"
        c_tag, v_tag, f_tag, is_tag = ns + "c", ns + "v", ns + "f", ns + "is"
        cells = self.sheet.cells
        strings, dates, styles = book.strings, book.dates, book.styles
        style_of = book.style_of
        row_number = max_row = max_col = seen = 0
        ref: str | None = None
        where = f"{book.label}: sheet {name!r}"
        try:
            for element in iter_part(book.archive, part, where, (row_tag, merge_tag)):
                if element.tag == merge_tag:
                    self.merges.append(element.get("ref") or "")
                    continue
                r_attr = element.get("r")
                row_number = _row_number(r_attr) if r_attr is not None else row_number + 1
                row_text = str(row_number)
                col_number = 0
                for c in element:
                    if c.tag != c_tag:
                        continue
                    ref = c.get("r")
                    row, col = cell_position(ref, row_number, row_text, col_number)
                    col_number = col
                    t = c.get("t")
                    s = c.get("s")
                    text = formula_el = inline = None
                    if len(c) == 1:  # the common case: only <v>
                        child = c[0]
                        if child.tag == v_tag:
                            text = child.text
                        elif child.tag == f_tag:
                            formula_el = child
                        elif child.tag == is_tag:
                            inline = child
                    else:
                        for child in c:
                            tag = child.tag
                            if tag == v_tag:
                                text = child.text
                            elif tag == f_tag:
                                formula_el = child
                            elif tag == is_tag:
                                inline = child
                    # The stored value, read by type as a spreadsheet wrote it; numbers and
                    # shared strings (nearly every cell) inline.
                    value: CellValue
                    if text and (t is None or t == "n"):
                        if "." in text or "E" in text or "e" in text or (s in dates):
                            value = float(text)
                            if value - value != 0.0:  # 1E400: no spreadsheet holds infinity
                                value = NOT_A_NUMBER
                        else:
                            value = int(text)
                    elif text and t == "s":
                        value = strings[int(text)]
                    else:
                        inline_text = None if inline is None else book.inline_text(inline)
                        value = typed_value(book, t, s, text, inline_text)
                    formula: str | None = None
                    array_ref: str | None = None
                    if formula_el is not None:
                        formula, array_ref = self._formula(formula_el, row, col, value)
                    if value is None and formula is None:
                        continue
                    cells[(row, col)] = built_cell(
                        name, row, col, value, formula, styles.get(s) or style_of(s), array_ref
                    )
                    if col > max_col:
                        max_col = col
                    if row > max_row:
                        max_row = row
                seen += 1
                element.clear()
                if seen % PRUNE_EVERY == 0:
                    prune(element)
                if len(cells) + book.cell_count > MAX_CELLS:
                    raise UnreadableWorkbook(
                        f"{where} holds more than {MAX_CELLS:,} cells; refused as too large to "
                        "audit (split the workbook, or audit an extract of the data)"
                    )
        except (ValueError, IndexError, OverflowError, TypeError) as exc:
            at = f" at cell {ref!r}" if ref else ""
            raise UnreadableWorkbook(
                f"{where}{at} holds a value that is not what its type says ({exc}); the file is "
                "damaged: open and re-save it in a spreadsheet application"
            ) from exc
        self.sheet.max_row, self.sheet.max_col = max_row, max_col
        self._keep_shared()
        if self.merges:
            self._unmerge()
        book.cell_count += len(cells)
        return self.sheet

    def _formula(
        self, element: Any, row: int, col: int, value: CellValue
    ) -> tuple[str | None, str | None]:
        return self.formula_of(element.get, element.text, row, col, value)

    def formula_of(
        self,
        attribute: Callable[[str], str | None],
        inner: str | None,
        row: int,
        col: int,
        value: CellValue,
    ) -> tuple[str | None, str | None]:
        """The formula text and array block of the cell at (``row``, ``col``) whose ``<f>``
        has the attributes ``attribute`` gives and the text ``inner``; (None, None) for a
        data table's cell. Counts the formula for ``Workbook.stored_values``."""
        book = self.book
        kind = attribute("t")
        text = "=" + (inner or "")
        array_ref: str | None = None
        if kind == "array":
            array_ref = attribute("ref") or f"{column_letter(col)}{row}"
            book.add_array(self.sheet.name, array_ref)
        elif kind == "shared":
            index = attribute("si") or ""
            shared = self.shared_formulas.get(index)
            if shared is not None:
                try:
                    text = shared.at(row, col)
                    shared.include(row, col)
                except Exception as exc:  # openpyxl's translator raises several types
                    raise UnreadableWorkbook(
                        f"{book.label}: sheet {self.sheet.name!r}: the shared formula at "
                        f"{column_letter(col)}{row} cannot be expanded "
                        f"({type(exc).__name__}: {exc}); the file is damaged"
                    ) from exc
            elif text != "=":
                self.shared_formulas[index] = SharedFormula(text, row, col)
        elif kind == "dataTable":
            return None, None  # a what-if table: its cells keep their stored values
        book.formula_count += 1
        if value not in (None, 0, "") and not (isinstance(value, float) and value == 0.0):
            book.valued_formulas += 1
        return text, array_ref

    def _keep_shared(self) -> None:
        """The sheet keeps its shared-formula groups: a cell's tokens come from its group."""
        if self.shared_formulas:
            self.sheet.shared = SharedGroups(list(self.shared_formulas.values()))

    def _unmerge(self) -> None:
        """Only the top-left cell of a merged range holds anything (as in the spreadsheet and in
        openpyxl); the others are dropped."""
        cells = self.sheet.cells
        for ref in self.merges:
            try:
                r1, c1, r2, c2 = cell_bounds(ref)
            except ValueError:
                continue
            area = (r2 - r1 + 1) * (c2 - c1 + 1)
            if area <= 4 * len(cells):
                doomed = [(r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1)]
            else:
                doomed = [(r, c) for r, c in cells if r1 <= r <= r2 and c1 <= c <= c2]
            for key in doomed:
                if key != (r1, c1):
                    cells.pop(key, None)
        self.sheet.max_row = max((r for r, _ in cells), default=0)
        self.sheet.max_col = max((c for _, c in cells), default=0)
