"""Reading workbooks: every cell's formula text, stored value and number format; defined names.

The reading layer is the only one that opens input files: this module (the data classes, the
container check, :func:`read_workbook`), :mod:`auditor.xlsxstream` (the one-pass reader regaudit
uses), :mod:`auditor.xlsxparts` and :mod:`auditor.xmlsafe` (package parts, hostile XML) and
:mod:`auditor.workbook_openpyxl` (the two-load reference reader). Files are opened read-only; the
zip central directory is checked before anything is inflated; every library error becomes
:class:`auditor.errors.UnreadableWorkbook` with a message that says what the file is and what to
do. Macros in .xlsm files are never run: only worksheet XML is read.
"""

from __future__ import annotations

import hashlib
import re
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
# A 1,048,576-row sheet of numbers is about 100 MB of XML; 1 GB declared is refused.
MAX_TOTAL_UNCOMPRESSED = 1_000_000_000
MAX_MEMBERS = 10_000
MAX_RATIO = 200.0  # real sheet XML deflates 5-50 fold
RATIO_FLOOR_BYTES = 10 * 1024**2  # small parts may compress better; only large ones are judged
ENGINES = ("stream", "openpyxl")


@dataclass(frozen=True)
class ErrorValue:
    """A spreadsheet error value such as ``#DIV/0!``; it propagates through formulas."""

    code: str

    def __str__(self) -> str:
        return self.code


CellValue = float | int | str | bool | ErrorValue | None


@dataclass(frozen=True, slots=True)
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
    """Refuse to run unless both XML paths are protected against hostile markup: openpyxl must
    parse through defusedxml, and the one-pass reader's guard must refuse an entity declaration
    (tried here on a tiny billion-laughs prolog, which costs microseconds)."""
    from openpyxl import xml as openpyxl_xml

    from auditor.xmlsafe import refuse_declarations

    if not getattr(openpyxl_xml, "DEFUSEDXML", False):
        raise RuntimeError(
            "openpyxl is not using defusedxml; install defusedxml so that hostile XML "
            "(entity expansion) cannot be used against the reader"
        )
    probe = b'<?xml version="1.0"?><!DOCTYPE x [<!ENTITY a "aaaa">]><x>&a;</x>'
    try:
        refuse_declarations(probe, "start-up probe")
    except UnreadableWorkbook:
        return
    raise RuntimeError("the XML guard let an entity declaration through; refusing to run")


def _compound_streams(path: Path) -> bytes:
    """The first directory sector of an OLE compound file (MS-CFB): it names the streams that
    tell a password-protected xlsx (EncryptionInfo, EncryptedPackage) from a legacy .xls
    (Workbook or Book). Empty when the header does not make sense."""
    with open(path, "rb") as handle:
        header = handle.read(512)
        if len(header) < 512:
            return b""
        shift = int.from_bytes(header[30:32], "little")
        first_directory = int.from_bytes(header[48:52], "little")
        if not 7 <= shift <= 16 or first_directory >= 0xFFFFFFFA:
            return b""
        handle.seek((first_directory + 1) << shift)
        return handle.read(1 << shift)


def _looks_like_text(head: bytes) -> bool:
    try:
        text = head[:2048].decode("utf-8")
    except UnicodeDecodeError as exc:
        if exc.start < len(head[:2048]) - 4:  # not just a character cut at the end
            return False
        text = head[: exc.start].decode("utf-8")
    return bool(text) and all(ch.isprintable() or ch in "\t\r\n" for ch in text)


def _describe_non_zip(head: bytes, path: Path) -> str:
    if head.startswith(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"):
        streams = _compound_streams(path)
        if "EncryptedPackage".encode("utf-16-le") in streams:
            return (
                f"{path.name} is a password-protected workbook (an encrypted package inside an "
                "OLE compound file); regaudit cannot read it. Open it with the password, save "
                "an unprotected copy as .xlsx, and audit the copy"
            )
        if any(name.encode("utf-16-le") in streams for name in ("Workbook", "Book")):
            return (
                f"{path.name} is a legacy Excel 97-2003 workbook (.xls), not an xlsx package; "
                "open it and save it as .xlsx, then audit the copy"
            )
        return (
            f"{path.name} is an OLE compound file, not an xlsx package: either a legacy .xls "
            "workbook or an xlsx protected with a password (encryption wraps it this way). "
            "Remove the password or save it as .xlsx, then audit the copy"
        )
    if not head:
        return f"{path.name} is empty (0 bytes); ask for a fresh copy"
    text = head.lstrip()
    if text.startswith((b"<?xml", b"<html", b"<HTML", b"<!DOCTYPE")):
        return f"{path.name} is an XML or HTML text file, not an xlsx package; save it as .xlsx"
    if _looks_like_text(head):
        return (
            f"{path.name} is plain text (perhaps a CSV renamed to .xlsx), not an xlsx package; "
            "open it in a spreadsheet and save it as .xlsx"
        )
    return (
        f"{path.name} is not a zip container, so not an xlsx package (it may be damaged or "
        "truncated at the start); ask for a fresh copy"
    )


def check_container(path: Path) -> None:
    """Inspect the zip central directory before anything is inflated."""
    with open(path, "rb") as handle:
        head = handle.read(2048)
    if not head.startswith(b"PK"):
        raise UnreadableWorkbook(_describe_non_zip(head, path))
    try:
        with zipfile.ZipFile(path) as archive:
            members = archive.infolist()
    # A damaged central directory can also hold a name that is not the UTF-8 its flag says,
    # claim a zip version from the future, or point past the end of the file.
    except (zipfile.BadZipFile, UnicodeDecodeError, NotImplementedError, OSError, EOFError) as exc:
        raise UnreadableWorkbook(
            f"{path.name} is a damaged or truncated zip container ({exc}); "
            "ask for a fresh copy of the file"
        ) from exc
    if len(members) > MAX_MEMBERS:
        raise UnreadableWorkbook(
            f"{path.name} holds {len(members):,} parts (limit {MAX_MEMBERS:,}); refused as unsafe"
        )
    total = sum(m.file_size for m in members)
    if total >= MAX_TOTAL_UNCOMPRESSED:
        raise UnreadableWorkbook(
            f"{path.name} declares {total / 1e9:,.1f} GB once unpacked (limit "
            f"{MAX_TOTAL_UNCOMPRESSED / 1e9:.0f} GB); refused as a possible zip bomb or a file too "
            "large to audit"
        )
    for member in members:
        if member.file_size > RATIO_FLOOR_BYTES:
            ratio = member.file_size / max(member.compress_size, 1)
            if ratio > MAX_RATIO:
                raise UnreadableWorkbook(
                    f"{path.name}: part {member.filename!r} inflates {ratio:,.0f}-fold "
                    f"(limit {MAX_RATIO:.0f}); refused as a possible zip bomb"
                )
        if member.flag_bits & 0x1:
            raise UnreadableWorkbook(
                f"{path.name}: part {member.filename!r} is encrypted at the zip level, which no "
                "spreadsheet application writes; ask for an unprotected .xlsx"
            )
        if member.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise UnreadableWorkbook(
                f"{path.name}: part {member.filename!r} uses zip compression method "
                f"{member.compress_type}, which xlsx files never use; re-save it as .xlsx"
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
    for part, kind in (("word/document.xml", "a Word"), ("ppt/presentation.xml", "a PowerPoint")):
        if part in names:
            raise UnreadableWorkbook(f"{path.name} is {kind} document, not a workbook")
    if "xl/workbook.xml" not in names:
        raise UnreadableWorkbook(
            f"{path.name} is a zip file but not an xlsx workbook (no xl/workbook.xml); if it "
            "is an archive of workbooks, unpack it and audit the folder"
        )


def read_workbook(path: str | Path, engine: str = "stream") -> Workbook:
    """Every cell's formula, stored value and number format, and the defined names.

    ``engine`` "stream" is the one-pass reader; "openpyxl" the two-load reference. Never writes
    to ``path``."""
    path = Path(path)
    if not path.is_file():
        raise UnreadableWorkbook(f"{path} does not exist or is not a file")
    if engine not in ENGINES:
        raise ValueError(f"unknown reader engine {engine!r}; choose from {', '.join(ENGINES)}")
    check_container(path)
    digest = sha256_of(path)
    if engine == "openpyxl":
        from auditor.workbook_openpyxl import read_with_openpyxl

        return read_with_openpyxl(path, digest)
    from auditor.xlsxstream import read_package

    return read_package(path, digest)
