"""Reading workbooks: every cell's formula text, stored value and number format; defined names.

The reading layer is the only one that opens input files:

    workbook.py           the data classes and read_workbook(path, engine)
    container.py          what a file is, from its first bytes and zip central directory
    xlsxstream.py         the one-pass reader regaudit uses (one sheet: xlsxsheet.py)
    xlsxparts.py          relationships, sheets and names, shared strings, number formats
    xmlsafe.py            XML parsing that entity tricks cannot get through
    workbook_openpyxl.py  the two-load openpyxl reader, the reference the tests compare with

Files are opened read-only; the zip central directory is checked before anything is inflated;
every library error becomes :class:`auditor.errors.UnreadableWorkbook` with a message that says
what the file is and what to do. Macros in .xlsm files are never run: only worksheet XML is read.
"""

from __future__ import annotations

from collections.abc import MutableMapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, NamedTuple

if TYPE_CHECKING:
    from auditor.read.charts import Chart
    from auditor.read.shared_formulas import SharedGroups

from auditor.grid import column_letter
from auditor.read.numbers import NumberIndex

ERROR_CODES = (
    "#NULL!",
    "#DIV/0!",
    "#VALUE!",
    "#REF!",
    "#NAME?",
    "#NUM!",
    "#N/A",
    "#GETTING_DATA",
    "#SPILL!",
    "#CALC!",
)


@dataclass(frozen=True)
class ErrorValue:
    """A spreadsheet error value such as ``#DIV/0!``; it propagates through formulas."""

    code: str

    def __str__(self) -> str:
        return self.code


CellValue = float | int | str | bool | ErrorValue | None


class Cell(NamedTuple):
    """One cell as the file holds it.

    A named tuple rather than a frozen dataclass: the reader builds one per cell (200,000 for
    twenty small workbooks), and a tuple is filled in C (``tuple.__new__(Cell, fields)``, about
    0.4 µs against 0.9 for the slots of a dataclass). It reads, compares and hashes as the
    dataclass did (by its fields, in order) and cannot be changed; code should not rely on it
    being a tuple.
    """

    sheet: str
    row: int  # 1-based
    col: int  # 1-based
    value: CellValue  # the stored (cached) value, or the typed constant
    formula: str | None = None  # formula text with a leading '=', or None for a constant
    number_format: str = "General"
    array_ref: str | None = None  # the block an array formula fills, e.g. "E2:F6" (anchor only)

    @property
    def coord(self) -> str:
        return f"{column_letter(self.col)}{self.row}"  # remembered per column (auditor.grid)

    @property
    def address(self) -> str:
        return f"{self.sheet}!{column_letter(self.col)}{self.row}"


@dataclass(eq=False)
class SheetIndex:
    """What the fast reader saw of a sheet while it typed the cells, kept so that later stages
    need not walk every cell again (on a sheet of data nearly every cell is a number, and the
    searches want only the numbers, only the formulas or only the text):

    - every cell holding a finite int or float (not a bool, text, error or empty cell), typed
      constants and formulas' stored values alike, as packed arrays
      (:class:`~auditor.read.numbers.NumberIndex`);
    - the cells holding text (typed, shared, inline, or a formula's stored text);
    - the cells holding a formula;

    each in the sheet's own order (the order of ``Sheet.cells``). Read it through
    :func:`sheet_index`, which gives it only while the cell store is the one it was made for and
    holds as many cells as were made: a cell given twice, a merged cell dropped or a cell added
    since makes it stale, and the callers walk the cells as before. Sheets built in memory
    (tests) have none.
    """

    numbers: NumberIndex = field(default_factory=NumberIndex)
    texts: list[Cell] = field(default_factory=list)
    formulas: list[Cell] = field(default_factory=list)
    made: int = 0  # cells the reader put in the store
    store: MutableMapping[tuple[int, int], Cell] | None = None  # the store it describes

    def add_cell(self, cell: Cell) -> None:
        """Any cell as the reader made it."""
        value = cell.value
        kind = type(value)
        if kind is str:
            self.texts.append(cell)
        elif (kind is float and value - value == 0.0) or kind is int:  # type: ignore[operator]
            self.numbers.add(cell.row, cell.col, value, cell.formula is not None)  # type: ignore[arg-type]
        if cell.formula:
            self.formulas.append(cell)


def sheet_index(sheet: Sheet) -> SheetIndex | None:
    """The reader's index of ``sheet`` while it still describes the cells; else None."""
    index = sheet.index
    if index is None or index.store is not sheet.cells or index.made != len(sheet.cells):
        return None
    return index


@dataclass
class Sheet:
    name: str
    # A dict, or for a part of a million rows a CompactCells store that behaves as one
    # (auditor.read.compact): cells in the sheet's row-major order either way.
    cells: MutableMapping[tuple[int, int], Cell] = field(default_factory=dict)
    max_row: int = 0
    max_col: int = 0
    # What the fast reader saw while typing the cells (SheetIndex; read it through sheet_index()).
    index: SheetIndex | None = field(default=None, compare=False, repr=False)
    # The shared-formula groups the reader met (tokens of a cell's formula without tokenising).
    shared: SharedGroups | None = field(default=None, compare=False, repr=False)

    def get(self, row: int, col: int) -> Cell | None:
        return self.cells.get((row, col))

    def value(self, row: int, col: int) -> CellValue:
        cell = self.cells.get((row, col))
        return None if cell is None else cell.value


@dataclass(frozen=True)
class DefinedName:
    name: str
    refers_to: str  # formula text without '=', e.g. "Data!$A$2:$A$21"
    scope: str | None = None  # sheet name for a sheet-scoped name, None for workbook scope


@dataclass(frozen=True)
class Table:
    """A table (list object) of a sheet: its whole block, header and totals rows, columns."""

    name: str
    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    columns: tuple[str, ...]
    header_rows: int = 1
    totals_rows: int = 0


@dataclass(eq=False)  # compared and hashed by identity: a parsed workbook is one object
class Workbook:
    path: str
    sha256: str
    sheets: dict[str, Sheet]
    names: list[DefinedName]
    stored_values: bool  # False when formulas carry no cached values (written by a script)
    array_anchors: dict[tuple[str, int, int], tuple[int, int, int, int]] = field(
        default_factory=dict
    )  # (sheet, row, col) of every cell in an array block -> (r1, c1, r2, c2) of the block
    charts: list[Chart] = field(default_factory=list)  # auditor.read.charts, in sheet order
    external_links: dict[str, str] = field(default_factory=dict)  # "[1]" -> linked file's name
    tables: dict[str, Table] = field(default_factory=dict)  # by upper-case name

    def sheet(self, name: str) -> Sheet | None:
        if name in self.sheets:
            return self.sheets[name]
        lowered = name.lower()
        for sheet_name, sheet in self.sheets.items():
            if sheet_name.lower() == lowered:
                return sheet
        return None

    def cell(self, sheet: str, row: int, col: int) -> Cell | None:
        found = self.sheet(sheet)
        return None if found is None else found.get(row, col)

    def resolve_name(self, name: str, sheet: str | None = None) -> str | None:
        """The text a defined name refers to; a sheet-scoped name wins on its own sheet."""
        lowered = name.lower()
        if sheet is not None:
            for defined in self.names:
                if (
                    defined.scope is not None
                    and defined.scope.lower() == sheet.lower()
                    and defined.name.lower() == lowered
                ):
                    return defined.refers_to
        for defined in self.names:
            if defined.scope is None and defined.name.lower() == lowered:
                return defined.refers_to
        return None

    def formula_cells(self) -> list[Cell]:
        found: list[Cell] = []
        for sheet in self.sheets.values():
            index = sheet_index(sheet)
            if index is not None:
                found.extend(index.formulas)
                continue
            # A compact store (auditor.read.compact) holds every formula cell as an object.
            stored = getattr(sheet.cells, "stored_cells", None)
            cells = stored() if stored is not None else sheet.cells.values()
            found.extend(c for c in cells if c.formula)
        return found
