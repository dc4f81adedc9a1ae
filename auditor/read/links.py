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

from auditor.read.parts import read_relationships, rels_part
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


def external_links(archive: zipfile.ZipFile, book_part: str, label: str) -> dict[str, str]:
    """``{"[1]": "partner.xlsx", ...}``: each external reference's file name, in order."""
    root = parse_part(archive, book_part, f"{label}: part {book_part!r}")
    rels = read_relationships(archive, book_part, label)
    found: dict[str, str] = {}
    references = [e for e in root.iter() if _local(e.tag) == "externalReference"]
    for number, element in enumerate(references, start=1):
        rel_id = next((v for k, v in element.attrib.items() if _local(k) == "id"), "")
        _, part = rels.get(rel_id, ("", ""))
        if part and part in archive.NameToInfo:
            name = linked_file_name(_external_path(archive, part, label))
            if name:
                found[f"[{number}]"] = name
    return found
