"""Reading workbooks: every cell's formula text, stored value and number format; defined names.

This is the only module that opens input files. It opens them read-only, checks the container
before inflating anything, and translates every library error into
:class:`auditor.errors.UnreadableWorkbook` with a message that says what the file is and what to do.

openpyxl keeps either the formula or the stored value of a cell per load, so a workbook is loaded
twice (formulas, then cached values). openpyxl parses XML through defusedxml when it is installed,
which regaudit requires; :func:`assert_safe_xml` checks that at start-up.
"""

from __future__ import annotations

import hashlib
import re
import warnings
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

from auditor.errors import UnreadableWorkbook

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

# Limits against hostile containers (checked on the central directory, before inflating).
MAX_TOTAL_UNCOMPRESSED = 2 * 1024**3
MAX_MEMBERS = 10_000
MAX_RATIO = 200.0
RATIO_FLOOR_BYTES = 10 * 1024**2


@dataclass(frozen=True)
class ErrorValue:
    """A spreadsheet error value such as ``#DIV/0!``; it propagates through formulas."""

    code: str

    def __str__(self) -> str:
        return self.code


CellValue = float | int | str | bool | ErrorValue | None


@dataclass(frozen=True)
class Cell:
    """One cell as the file holds it."""

    sheet: str
    row: int  # 1-based
    col: int  # 1-based
    value: CellValue  # the stored (cached) value, or the typed constant
    formula: str | None = None  # formula text with a leading '=', or None for a constant
    number_format: str = "General"
    array_ref: str | None = None  # the block an array formula fills, e.g. "E2:F6" (anchor only)

    @property
    def coord(self) -> str:
        return f"{column_letter(self.col)}{self.row}"

    @property
    def address(self) -> str:
        return f"{self.sheet}!{self.coord}"


@dataclass
class Sheet:
    name: str
    cells: dict[tuple[int, int], Cell] = field(default_factory=dict)
    max_row: int = 0
    max_col: int = 0

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


@dataclass
class Workbook:
    path: str
    sha256: str
    sheets: dict[str, Sheet]
    names: list[DefinedName]
    stored_values: bool  # False when formulas carry no cached values (written by a script)
    array_anchors: dict[tuple[str, int, int], tuple[int, int, int, int]] = field(
        default_factory=dict
    )  # (sheet, row, col) of every cell in an array block -> (r1, c1, r2, c2) of the block

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
        return [c for s in self.sheets.values() for c in s.cells.values() if c.formula]


def column_letter(col: int) -> str:
    letters = ""
    while col > 0:
        col, rem = divmod(col - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def column_index(letters: str) -> int:
    index = 0
    for char in letters.upper():
        index = index * 26 + (ord(char) - 64)
    return index


_CELL_RE = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+)$")


def parse_cell(coord: str) -> tuple[int, int]:
    """'$B$7' -> (7, 2)."""
    match = _CELL_RE.match(coord.strip())
    if not match:
        raise ValueError(f"not a cell reference: {coord!r}")
    return int(match.group(2)), column_index(match.group(1))


def sha256_of(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def assert_safe_xml() -> None:
    """Refuse to run if openpyxl would parse XML without defusedxml's protections."""
    from openpyxl import xml as openpyxl_xml

    if not getattr(openpyxl_xml, "DEFUSEDXML", False):
        raise RuntimeError(
            "openpyxl is not using defusedxml; install defusedxml so that hostile XML "
            "(entity expansion) cannot be used against the reader"
        )


def _describe_non_zip(head: bytes, path: Path) -> str:
    if head.startswith(b"\xd0\xcf\x11\xe0"):
        return (
            f"{path.name} is an OLE compound file, not an xlsx package: either a legacy .xls "
            "workbook or an xlsx protected with a password (encryption wraps it this way). "
            "Remove the password or save it as .xlsx, then audit the copy"
        )
    text = head.lstrip()
    if text.startswith((b"<?xml", b"<html", b"<HTML", b"<!DOCTYPE")):
        return f"{path.name} is an XML or HTML text file, not an xlsx package; save it as .xlsx"
    if head and all(32 <= b < 127 or b in (9, 10, 13) for b in head[:512]):
        return (
            f"{path.name} is plain text (perhaps a CSV renamed to .xlsx), not an xlsx package; "
            "open it in a spreadsheet and save it as .xlsx"
        )
    if not head:
        return f"{path.name} is empty (0 bytes)"
    return f"{path.name} is not a zip container, so not an xlsx package (it may be truncated)"


def check_container(path: Path) -> None:
    """Inspect the zip central directory before anything is inflated."""
    with open(path, "rb") as handle:
        head = handle.read(2048)
    if not head.startswith(b"PK"):
        raise UnreadableWorkbook(_describe_non_zip(head, path))
    try:
        with zipfile.ZipFile(path) as archive:
            members = archive.infolist()
    except zipfile.BadZipFile as exc:
        raise UnreadableWorkbook(
            f"{path.name} is a damaged or truncated zip container ({exc}); "
            "ask for a fresh copy of the file"
        ) from exc
    if len(members) > MAX_MEMBERS:
        raise UnreadableWorkbook(
            f"{path.name} holds {len(members):,} parts (limit {MAX_MEMBERS:,}); refused as unsafe"
        )
    total = sum(m.file_size for m in members)
    if total > MAX_TOTAL_UNCOMPRESSED:
        raise UnreadableWorkbook(
            f"{path.name} declares {total / 1024**3:.1f} GiB once unpacked "
            f"(limit {MAX_TOTAL_UNCOMPRESSED / 1024**3:.0f} GiB); refused as a possible zip bomb"
        )
    for member in members:
        if member.file_size > RATIO_FLOOR_BYTES and member.compress_size > 0:
            ratio = member.file_size / member.compress_size
            if ratio > MAX_RATIO:
                raise UnreadableWorkbook(
                    f"{path.name}: part {member.filename!r} inflates {ratio:,.0f}-fold "
                    f"(limit {MAX_RATIO:.0f}); refused as a possible zip bomb"
                )
    names = {m.filename for m in members}
    if "xl/workbook.bin" in names:
        raise UnreadableWorkbook(
            f"{path.name} is a binary workbook (.xlsb); save it as .xlsx and audit the copy"
        )
    if "content.xml" in names and "mimetype" in names:
        raise UnreadableWorkbook(
            f"{path.name} is an OpenDocument spreadsheet (.ods); save it as .xlsx"
        )
    if "xl/workbook.xml" not in names:
        raise UnreadableWorkbook(
            f"{path.name} is a zip file but not an xlsx workbook (no xl/workbook.xml)"
        )


def _convert_value(value: object, data_type: str | None) -> CellValue:
    if value is None:
        return None
    if data_type == "e":  # a text cell holding "#N/A" is text, not an error
        return ErrorValue(str(value))
    if isinstance(value, bool):
        return value
    if isinstance(value, (int, float)):
        return float(value) if isinstance(value, float) else int(value)
    if hasattr(value, "isoformat"):
        # Dates: regaudit works on serial numbers as a spreadsheet does.
        from openpyxl.utils.datetime import to_excel

        try:
            return float(to_excel(value))  # type: ignore[arg-type]
        except (TypeError, ValueError):
            return str(value)
    return str(value)


def _range_bounds(ref: str) -> tuple[int, int, int, int]:
    first, _, last = ref.partition(":")
    r1, c1 = parse_cell(first)
    r2, c2 = parse_cell(last or first)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)


def read_workbook(path: str | Path) -> Workbook:
    """Read every cell's formula, stored value and number format. Never writes to ``path``."""
    import openpyxl
    from openpyxl.worksheet.formula import ArrayFormula, DataTableFormula

    path = Path(path)
    if not path.is_file():
        raise UnreadableWorkbook(f"{path} does not exist or is not a file")
    check_container(path)
    digest = sha256_of(path)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            book_f = openpyxl.load_workbook(path, read_only=False, data_only=False, keep_vba=False)
            book_v = openpyxl.load_workbook(path, read_only=False, data_only=True, keep_vba=False)
    except UnreadableWorkbook:
        raise
    except (zipfile.BadZipFile, KeyError, OSError, EOFError) as exc:
        raise UnreadableWorkbook(
            f"{path.name} could not be unpacked ({type(exc).__name__}: {exc}); "
            "the file is damaged or truncated: ask for a fresh copy"
        ) from exc
    except Exception as exc:  # openpyxl raises many types on malformed XML parts
        raise UnreadableWorkbook(
            f"{path.name} has a malformed workbook part ({type(exc).__name__}: {exc}); "
            "open and re-save it in a spreadsheet application, then audit the copy"
        ) from exc

    sheets: dict[str, Sheet] = {}
    names: list[DefinedName] = []
    arrays: dict[tuple[str, int, int], tuple[int, int, int, int]] = {}
    formula_count = 0
    valued_formulas = 0
    for ws_f in book_f.worksheets:
        ws_v = book_v[ws_f.title]
        sheet = Sheet(name=ws_f.title)
        values = {(c.row, c.column): c for row in ws_v.iter_rows() for c in row}
        for row in ws_f.iter_rows():
            for cell_f in row:
                raw = cell_f.value
                in_array = (ws_f.title, cell_f.row, cell_f.column) in arrays
                if raw is None and cell_f.data_type != "f" and not in_array:
                    continue
                cell_v = values.get((cell_f.row, cell_f.column))
                stored = (
                    _convert_value(cell_v.value, cell_v.data_type) if cell_v is not None else None
                )
                formula: str | None = None
                array_ref: str | None = None
                if isinstance(raw, ArrayFormula):
                    formula = raw.text if raw.text.startswith("=") else "=" + raw.text
                    array_ref = raw.ref
                    bounds = _range_bounds(raw.ref)
                    for r in range(bounds[0], bounds[2] + 1):
                        for c in range(bounds[1], bounds[3] + 1):
                            arrays[(ws_f.title, r, c)] = bounds
                elif isinstance(raw, DataTableFormula):
                    formula = None
                elif isinstance(raw, str) and cell_f.data_type == "f":
                    formula = raw
                if formula is not None:
                    formula_count += 1
                    if stored not in (None, 0, "") and not (
                        isinstance(stored, float) and stored == 0.0
                    ):
                        valued_formulas += 1
                    value = stored
                elif in_array:
                    value = stored
                else:
                    value = _convert_value(raw, cell_f.data_type)
                if value is None and formula is None:
                    continue
                sheet.cells[(cell_f.row, cell_f.column)] = Cell(
                    sheet=ws_f.title,
                    row=cell_f.row,
                    col=cell_f.column,
                    value=value,
                    formula=formula,
                    number_format=cell_f.number_format or "General",
                    array_ref=array_ref,
                )
                sheet.max_row = max(sheet.max_row, cell_f.row)
                sheet.max_col = max(sheet.max_col, cell_f.column)
        sheets[ws_f.title] = sheet
        for name, defined in getattr(ws_f, "defined_names", {}).items():
            if defined.attr_text:
                names.append(DefinedName(name, defined.attr_text, scope=ws_f.title))
    for name, defined in book_f.defined_names.items():
        if defined.attr_text:
            scope = None
            if defined.localSheetId is not None:
                scope = book_f.worksheets[int(defined.localSheetId)].title
            names.append(DefinedName(name, defined.attr_text, scope=scope))
    # Cells inside an array block other than its anchor hold only their stored values; they
    # were kept above (``in_array``) and the block is known from ``array_anchors``.
    stored = formula_count == 0 or valued_formulas > 0
    return Workbook(
        path=str(path),
        sha256=digest,
        sheets=sheets,
        names=names,
        stored_values=stored,
        array_anchors=arrays,
    )
