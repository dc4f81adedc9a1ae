"""Tables (list objects) of a sheet, from the table parts its relationships name.

A formula may read ``Rig[Load]`` instead of ``B2:B18``; resolving it needs the table's block,
its header and totals rows and its column names (``xl/tables/tableN.xml``). A damaged or
unreadable table part is skipped: its structured references then stay unresolved names and the
formulas using them are reported as such, never guessed.
"""

from __future__ import annotations

import zipfile

from auditor.errors import UnreadableWorkbook
from auditor.grid import parse_cell
from auditor.read.parts import read_relationships
from auditor.read.workbook import Table
from auditor.read.xmlsafe import parse_part


def _local(tag: object) -> str:
    return str(tag).rsplit("}", 1)[-1]


def _count(text: str | None, default: int) -> int:
    try:
        return int(text) if text is not None else default
    except ValueError:
        return default


def read_tables(archive: zipfile.ZipFile, sheet: str, part: str, label: str) -> list[Table]:
    """The tables of one sheet, in the order its relationships list them."""
    found: list[Table] = []
    for rel_type, target in read_relationships(archive, part, label).values():
        if not rel_type.endswith("/table") or target not in archive.NameToInfo:
            continue
        try:
            root = parse_part(archive, target, f"{label}: part {target!r}")
        except UnreadableWorkbook:
            continue
        name = root.get("displayName") or root.get("name")
        block = root.get("ref") or ""
        if not name or ":" not in block:
            continue
        try:
            (r1, c1), (r2, c2) = (parse_cell(corner) for corner in block.split(":", 1))
        except ValueError:
            continue
        columns = tuple(
            element.get("name") or ""
            for element in root.iter()
            if _local(element.tag) == "tableColumn"
        )
        found.append(
            Table(
                name,
                sheet,
                r1,
                c1,
                r2,
                c2,
                columns,
                header_rows=_count(root.get("headerRowCount"), 1),
                totals_rows=_count(root.get("totalsRowCount"), 0),
            )
        )
    return found
