"""The files a workbook links to: ``[1]`` in a formula is the first external reference of the
workbook part, and that reference's own relationships give the linked file's path.

    xl/workbook.xml            <externalReferences><externalReference r:id="rId5"/>...
    xl/_rels/workbook.xml.rels rId5 -> externalLinks/externalLink1.xml
    xl/externalLinks/_rels/externalLink1.xml.rels
                               externalLinkPath -> ../data/partner.xlsx (TargetMode External)

Reports then name the linked workbook by its file name instead of ``[1]`` (ECMA-376 Part 1,
18.14 "External Workbook References").
"""

from __future__ import annotations

import posixpath
import zipfile
from urllib.parse import unquote

from auditor.read.parts import BookParts, rels_part
from auditor.read.xmlsafe import parse_part


def _local(tag: object) -> str:
    return str(tag).rsplit("}", 1)[-1]


def _external_path(archive: zipfile.ZipFile, link_part: str, label: str) -> str:
    name = rels_part(link_part)
    if name not in archive.NameToInfo:
        return ""
    for element in parse_part(archive, name, f"{label}: part {name!r}"):
        if _local(element.tag) == "Relationship" and str(element.get("Type", "")).endswith(
            "/externalLinkPath"
        ):
            return str(element.get("Target") or "")
    return ""


def linked_file_name(target: str) -> str:
    """'file:///C:/data/My%20Book.xlsx' or '..\\data\\book.xlsx' -> 'My Book.xlsx'."""
    text = unquote(target).replace("\\", "/").rstrip("/")
    return posixpath.basename(text) or text


def external_links(archive: zipfile.ZipFile, parts: BookParts, label: str) -> dict[str, str]:
    """``{"[1]": "partner.xlsx", ...}``: each external reference's file name, in order, from
    what :func:`auditor.read.parts.read_book` read of the workbook part."""
    found: dict[str, str] = {}
    for number, rel_id in enumerate(parts.external_ids, start=1):
        _, part = parts.relationships.get(rel_id, ("", ""))
        if part and part in archive.NameToInfo:
            name = linked_file_name(_external_path(archive, part, label))
            if name:
                found[f"[{number}]"] = name
    return found
