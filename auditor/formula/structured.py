"""Structured table references: ``Rig[Load]``, ``Rig[[#Data],[Load]:[Strain]]``, ``Rig[#All]``.

Resolved against the tables the reader found (:class:`auditor.read.workbook.Table`) into the
block of cells they stand for. A form this module does not resolve (``[@Load]``, the current
row; a column the table does not have) gives None and stays an unresolved name, reported as
such.
"""

from __future__ import annotations

import re

from auditor.formula.nodes import Ref
from auditor.read.workbook import Table, Workbook

_ITEM = re.compile(r"\[((?:[^\[\]']|'.)*)\]")
_SPECIALS = {"#ALL", "#DATA", "#HEADERS", "#TOTALS"}


def _unescape(text: str) -> str:
    return re.sub(r"'(.)", r"\1", text).strip()


def _column(table: Table, name: str) -> int | None:
    wanted = _unescape(name).lower()
    for index, column in enumerate(table.columns):
        if column.strip().lower() == wanted:
            return table.c1 + index
    return None


def _rows(table: Table, special: str) -> tuple[int, int] | None:
    data_top, data_bottom = table.r1 + table.header_rows, table.r2 - table.totals_rows
    return {
        "#ALL": (table.r1, table.r2),
        "#DATA": (data_top, data_bottom),
        "#HEADERS": (table.r1, table.r1) if table.header_rows else None,
        "#TOTALS": (table.r2, table.r2) if table.totals_rows else None,
    }.get(special)


def resolve_structured(workbook: Workbook, text: str) -> Ref | None:
    """The block ``Table[...]`` stands for, or None when it cannot be resolved."""
    head, bracket, rest = text.partition("[")
    table = workbook.tables.get(head.strip().upper()) if head.strip() else None
    if table is None or not bracket:
        return None
    body = "[" + rest
    if body.strip() == "[]":
        body = "[#Data]"
    if body.startswith("[[") and body.endswith("]]"):
        body = body[1:-1]
    items = [m.group(1) for m in _ITEM.finditer(body)]
    plain = _ITEM.sub("", body).replace(",", "").replace(":", "").strip()
    if not items or plain:
        return None
    specials = [i.strip().upper() for i in items if i.strip().upper() in _SPECIALS]
    names = [i for i in items if i.strip().upper() not in _SPECIALS]
    if any(i.strip().startswith("@") or i.strip().upper() == "#THIS ROW" for i in items):
        return None  # the current row: needs the formula's own row
    rows = [_rows(table, s) for s in specials] or [_rows(table, "#DATA")]
    if any(r is None for r in rows):
        return None
    r1 = min(r[0] for r in rows if r is not None)
    r2 = max(r[1] for r in rows if r is not None)
    if names:
        columns = [_column(table, n) for n in names]
        if any(c is None for c in columns) or len(columns) > 2:
            return None
        c1, c2 = min(c for c in columns if c), max(c for c in columns if c)
    else:
        c1, c2 = table.c1, table.c2
    return Ref(table.sheet, r1, c1, r2, c2)
