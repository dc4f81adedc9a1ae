"""Opening a workbook: the container check, the digest, then one of the two readers.

This module is the one door to input files: everything else receives a parsed
:class:`~auditor.read.workbook.Workbook`.
"""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from auditor.errors import UnreadableWorkbook
from auditor.read.container import check_container, open_container
from auditor.read.workbook import Workbook

ENGINES = ("stream", "lxml", "openpyxl")
# Internal: the reader every audit in this process uses unless told otherwise ("lxml" compares
# the fast scanner with the lxml reader over whole audits; never a user option).
READER_VARIABLE = "REGAUDIT_READER"


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

    from auditor.read.xmlsafe import refuse_declarations

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


def read_workbook(path: str | Path, engine: str | None = None) -> Workbook:
    """Every cell's formula, stored value and number format, and the defined names.

    ``engine`` "stream" is the one-pass reader (the fast scanner, lxml for any part it does not
    recognise); "lxml" the same reader with lxml for every part; "openpyxl" the two-load
    reference. The default is $REGAUDIT_READER, else "stream". Never writes to ``path``."""
    if engine is None:
        engine = os.environ.get(READER_VARIABLE) or "stream"
    path = Path(path)
    if not path.is_file():
        raise UnreadableWorkbook(f"{path} does not exist or is not a file")
    if engine not in ENGINES:
        raise ValueError(f"unknown reader engine {engine!r}; choose from {', '.join(ENGINES)}")
    if engine == "openpyxl":
        from auditor.read.reference_openpyxl import read_with_openpyxl

        check_container(path)  # the zip central directory, before anything is inflated
        return read_with_openpyxl(path, sha256_of(path))
    from auditor.read.stream import read_package

    archive = open_container(path)  # checked the same way, and kept open for the reading
    with archive:
        return read_package(path, sha256_of(path), fast=engine == "stream", archive=archive)
