"""The package-level parts of an xlsx file: relationships, the workbook part (sheets and defined
names), shared strings and number formats.

Each function reads one part through :mod:`auditor.read.xmlsafe` and returns plain data. The rules
follow openpyxl's reading where it is the reference for the tests (which names are kept, how a
number format is looked up, how rich text becomes plain text), so that both readers give the same
:class:`auditor.read.workbook.Workbook`.
"""

from __future__ import annotations

import posixpath
import re
import zipfile
from dataclasses import dataclass, field

from openpyxl.styles.numbers import BUILTIN_FORMATS, is_date_format

from auditor.errors import UnreadableWorkbook
from auditor.read.xmlsafe import iter_part, parse_part

MAIN_NAMESPACES = (
    "http://schemas.openxmlformats.org/spreadsheetml/2006/main",
    "http://purl.oclc.org/ooxml/spreadsheetml/main",  # ISO 29500 strict
)
PACKAGE_RELS = "http://schemas.openxmlformats.org/package/2006/relationships"
# Reserved names a spreadsheet keeps for itself (print areas, filters); openpyxl drops them.
_GLOBAL_RESERVED = ("_xlnm.Print_Titles", "_xlnm.Print_Area", "_xlnm._FilterDatabase")
_LOCAL_RESERVED = re.compile(
    r"^_xlnm\.(Print_Area|Print_Titles|Criteria|_FilterDatabase|Extract|Consolidate_Area"
    r"|Sheet_Title)"
)


@dataclass(frozen=True)
class SheetEntry:
    name: str
    part: str  # the sheet's part inside the package, e.g. "xl/worksheets/sheet1.xml"
    kind: str  # "worksheet" or "chartsheet"


@dataclass
class BookParts:
    """What the workbook part says: its namespace, sheets in tab order, names, other parts."""

    namespace: str
    sheets: list[SheetEntry] = field(default_factory=list)
    # (name, refers-to text, index into ``sheets`` for a sheet-scoped name or None)
    names: list[tuple[str, str, int | None]] = field(default_factory=list)
    shared_strings: str | None = None
    styles: str | None = None
    relationships: dict[str, tuple[str, str]] = field(default_factory=dict)  # of the part
    external_ids: list[str] = field(default_factory=list)  # externalReference ids, in order


def _local(tag: object) -> str:
    text = str(tag)
    return text.rsplit("}", 1)[-1]


def _namespace(tag: object) -> str:
    text = str(tag)
    return text[1:].split("}", 1)[0] if text.startswith("{") else ""


def rels_part(part: str) -> str:
    folder, name = posixpath.split(part)
    return posixpath.join(folder, "_rels", name + ".rels")


def _resolve(base_part: str, target: str) -> str:
    if target.startswith("/"):
        return target.lstrip("/")
    return posixpath.normpath(posixpath.join(posixpath.dirname(base_part), target))


def read_relationships(
    archive: zipfile.ZipFile, part: str, label: str
) -> dict[str, tuple[str, str]]:
    """Id -> (relationship type, target part) for ``part``; empty when it has no rels part."""
    name = rels_part(part)
    if name not in archive.NameToInfo:
        return {}
    root = parse_part(archive, name, f"{label}: part {name!r}")
    found: dict[str, tuple[str, str]] = {}
    for element in root:
        if _local(element.tag) != "Relationship" or element.get("TargetMode") == "External":
            continue
        rel_id, rel_type, target = element.get("Id"), element.get("Type"), element.get("Target")
        if rel_id and rel_type and target:
            found[rel_id] = (rel_type, _resolve(part, target))
    return found


def workbook_part(archive: zipfile.ZipFile, label: str) -> str:
    """The workbook part named by the package's root relationships (xl/workbook.xml usually)."""
    for rel_type, target in read_relationships(archive, "", label).values():
        if rel_type.endswith("/officeDocument") and target in archive.NameToInfo:
            return target
    return "xl/workbook.xml"


def read_book(archive: zipfile.ZipFile, part: str, label: str) -> BookParts:
    root = parse_part(archive, part, f"{label}: part {part!r}")
    namespace = _namespace(root.tag)
    if namespace not in MAIN_NAMESPACES:
        raise UnreadableWorkbook(
            f"{label}: the workbook part is in namespace {namespace!r}, not SpreadsheetML; "
            "save the file as .xlsx from a spreadsheet application"
        )
    rels = read_relationships(archive, part, label)
    book = BookParts(namespace=namespace, relationships=rels)
    book.external_ids = [
        next((v for k, v in element.attrib.items() if _local(k) == "id"), "")
        for element in root.iter()
        if _local(element.tag) == "externalReference"
    ]
    for rel_type, target in rels.values():
        if rel_type.endswith("/sharedStrings"):
            book.shared_strings = target
        elif rel_type.endswith("/styles"):
            book.styles = target
    ns = "{" + namespace + "}"
    for sheet in root.iterfind(f"{ns}sheets/{ns}sheet"):
        rel_id = next((v for k, v in sheet.attrib.items() if _local(k) == "id"), None)
        rel_type, target = rels.get(rel_id or "", ("", ""))
        kind = rel_type.rsplit("/", 1)[-1]
        if kind not in ("worksheet", "chartsheet"):
            continue  # dialog and macro sheets hold no cells regaudit reads
        if target not in archive.NameToInfo:
            raise UnreadableWorkbook(
                f"{label}: sheet {sheet.get('name')!r} points to part {target!r}, which is "
                "missing from the package; the file is damaged: ask for a fresh copy"
            )
        book.sheets.append(SheetEntry(sheet.get("name") or "", target, kind))
    book.names = _defined_names(root, ns, len(book.sheets), label)
    return book


def _defined_names(
    root: object, ns: str, sheet_count: int, label: str
) -> list[tuple[str, str, int | None]]:
    scoped: dict[int, dict[str, str]] = {}
    global_names: dict[str, str] = {}
    for element in root.iterfind(f"{ns}definedNames/{ns}definedName"):  # type: ignore[attr-defined]
        name, text, local = element.get("name") or "", element.text, element.get("localSheetId")
        if local is None:
            if name not in _GLOBAL_RESERVED:
                global_names[name] = text
            continue
        index = _int(local, f"{label}: defined name {name!r} has sheet index {local!r}")
        if not _LOCAL_RESERVED.match(name) and 0 <= index < sheet_count:
            scoped.setdefault(index, {})[name] = text
    names: list[tuple[str, str, int | None]] = []
    for index in sorted(scoped):
        names.extend((name, text, index) for name, text in scoped[index].items() if text)
    names.extend((name, text, None) for name, text in global_names.items() if text)
    return names


def _int(text: str, what: str) -> int:
    try:
        return int(text)
    except ValueError as exc:
        raise UnreadableWorkbook(f"{what}, not a whole number; the file is damaged") from exc


def plain_text(element: object, ns: str) -> str:
    """The text of a string item (``<si>`` or ``<is>``): its own ``<t>`` and its runs' ``<t>``,
    without phonetic guides."""
    t_tag, r_tag = ns + "t", ns + "r"
    pieces: list[str] = []
    for child in element:  # type: ignore[attr-defined]
        if child.tag == t_tag:
            if child.text:
                pieces.append(child.text)
        elif child.tag == r_tag:
            for run_child in child:
                if run_child.tag == t_tag and run_child.text:
                    pieces.append(run_child.text)
    return "".join(pieces)


def read_shared_strings(
    archive: zipfile.ZipFile, part: str | None, ns: str, label: str
) -> list[str]:
    if part is None or part not in archive.NameToInfo:
        return []
    strings: list[str] = []
    for item in iter_part(archive, part, f"{label}: part {part!r}", (ns + "si",)):
        # openpyxl's reading drops the escape prefix of a literal "_xHHHH_"; so do we.
        strings.append(plain_text(item, ns).replace("x005F_", ""))
        item.clear()
    return strings


def read_number_formats(
    archive: zipfile.ZipFile, part: str | None, ns: str, label: str
) -> tuple[list[str], frozenset[int]]:
    """The number format of each cell style (``s`` attribute), and the styles that are dates."""
    if part is None or part not in archive.NameToInfo:
        return ["General"], frozenset()
    where = f"{label}: part {part!r}"
    root = parse_part(archive, part, where)
    custom: dict[int, str] = {}
    for element in root.iterfind(f"{ns}numFmts/{ns}numFmt"):
        code = element.get("formatCode")
        if code is not None:
            custom[_int(element.get("numFmtId", ""), f"{where}: a numFmtId")] = code
    formats: list[str] = []
    dates: set[int] = set()
    for index, xf in enumerate(root.iterfind(f"{ns}cellXfs/{ns}xf")):
        fmt_id = _int(xf.get("numFmtId", "0"), f"{where}: a numFmtId")
        code = custom.get(fmt_id)
        if code is None:
            code = BUILTIN_FORMATS.get(fmt_id) if fmt_id < 164 else None
        if code is not None and is_date_format(code):
            dates.add(index)
        formats.append(code or "General")
    return formats or ["General"], frozenset(dates)
