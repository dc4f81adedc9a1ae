"""One pass over an xlsx package: every cell's formula text, stored value and number format.

openpyxl keeps either the formula or the stored value of a cell per load, so reading both costs
two full loads. This reader streams each sheet part once with ``lxml.etree.iterparse``
(through :mod:`auditor.read.xmlsafe`, so entity tricks cannot work) and takes both from the same
``<c>`` element: the ``<f>`` child, the ``<v>`` child read according to the ``t`` attribute, and
the ``s`` attribute's number format. Shared formulas are expanded as openpyxl's ``Translator``
expands them in its own normal load (:mod:`auditor.read.shared_formulas`, a template made once
per group); array formulas keep their block.

Each sheet part is read first by the fast scanner (:mod:`auditor.read.scan`: regular
expressions over the inflated XML, proven to give the same cells), and by the lxml loop of
:mod:`auditor.read.sheet` when the scanner does not recognise everything in it
(``read_workbook(path, engine="lxml")`` or ``REGAUDIT_READER=lxml`` uses the lxml loop for all).

It produces the same :class:`auditor.read.workbook.Workbook` as the openpyxl reader
(``tests/test_xlsxstream.py`` holds them to it on every fixture). Three deliberate differences,
on cells no fixture has: a number in a date or duration format stays the serial number the
spreadsheet stores (openpyxl converts through datetime, losing sub-microsecond digits, and turns
durations into text); a data-table formula's cell keeps its stored value; a style index that
points past the style table reads as General instead of failing the whole file.
"""

from __future__ import annotations

import gc
import struct
import zipfile
import zlib
from pathlib import Path

from auditor.errors import UnreadableWorkbook
from auditor.read.book import BookState
from auditor.read.charts import read_charts
from auditor.read.links import external_links
from auditor.read.parts import read_book, read_number_formats, read_shared_strings, workbook_part
from auditor.read.scan import read_sheet
from auditor.read.tables import read_tables
from auditor.read.workbook import DefinedName, Sheet, Table, Workbook

# What zipfile raises on a damaged container: a bad header or checksum, a deflate stream that
# breaks off, a seek past the end, a member name that is not the UTF-8 its flag promises.
UNPACKING_ERRORS = (
    zipfile.BadZipFile,
    zlib.error,
    EOFError,
    OSError,
    UnicodeDecodeError,
    struct.error,
)


def _read_book(
    archive: zipfile.ZipFile, label: str, path: Path, digest: str, fast: bool
) -> Workbook:
    book_part = workbook_part(archive, label)
    parts = read_book(archive, book_part, label)
    ns = "{" + parts.namespace + "}"
    formats, date_styles = read_number_formats(archive, parts.styles, ns, label)
    book = BookState(
        archive=archive,
        label=label,
        ns=ns,
        strings=read_shared_strings(archive, parts.shared_strings, ns, label),
        formats=formats,
        dates=frozenset(str(i) for i in date_styles),
    )
    sheets: dict[str, Sheet] = {}
    tables: dict[str, Table] = {}
    titles: list[str] = []
    for entry in parts.sheets:
        titles.append(entry.name)
        if entry.kind != "worksheet":
            continue
        if entry.name in sheets:
            raise UnreadableWorkbook(
                f"{label}: two sheets are named {entry.name!r}; the file is damaged"
            )
        sheets[entry.name] = read_sheet(book, entry.name, entry.part, fast)
        for table in read_tables(archive, entry.name, entry.part, label):
            tables.setdefault(table.name.upper(), table)
    names = [
        DefinedName(name, text, scope=None if index is None else titles[index])
        for name, text, index in parts.names
        if index is None or titles[index] in sheets
    ]
    return Workbook(
        path=str(path),
        sha256=digest,
        sheets=sheets,
        names=names,
        stored_values=book.formula_count == 0 or book.valued_formulas > 0,
        array_anchors=book.arrays,
        charts=read_charts(archive, parts.sheets, label),
        external_links=external_links(archive, parts, label),
        tables=tables,
    )


SETTLE_CELLS = 100_000  # a workbook from which _settle freezes what the reading made


def _settle(workbook: Workbook) -> None:
    """After reading a large workbook inside a run that keeps its long-lived objects frozen
    (:func:`auditor.pipeline.collector.frozen`, which unfreezes them when the run ends): collect
    the few reference cycles the reading left (lxml's feed parsers; none holds a cell), then
    freeze the workbook with the rest, so that the collector does not scan its cells again and
    again while it is audited (0.2 s of 2.9 s at 200,000 rows). Frozen objects are still freed as
    soon as nothing refers to them. A small workbook costs the collector less than the collection
    here would (20 workbooks of 10,000 cells: 0.1 s more); outside such a run (a notebook, a
    test) the collector is left as it was."""
    cells = sum(len(sheet.cells) for sheet in workbook.sheets.values())
    # The size first: get_freeze_count counts the frozen objects one by one (about 10 ms inside
    # a run), far more than a small workbook's whole reading.
    if cells < SETTLE_CELLS or gc.get_freeze_count() == 0:
        return
    gc.collect()
    gc.freeze()


def read_package(
    path: Path, digest: str, fast: bool = True, archive: zipfile.ZipFile | None = None
) -> Workbook:
    """The workbook at ``path`` (already checked by
    :func:`auditor.read.container.check_container`; ``archive``: the package open, as
    :func:`auditor.read.container.open_container` gives it, left open); ``fast``: sheets by the
    fast scanner (:mod:`auditor.read.scan`) where it recognises them, else all by the lxml
    reader."""
    label = path.name
    # Millions of cells are allocated and none form cycles: the cyclic collector would only
    # re-scan them again and again (a fifth of the reading time at 200,000 rows).
    collecting = gc.isenabled()
    gc.disable()
    try:
        if archive is not None:
            workbook = _read_book(archive, label, path, digest, fast)
        else:
            with zipfile.ZipFile(path) as opened:
                workbook = _read_book(opened, label, path, digest, fast)
        if collecting:
            _settle(workbook)
        return workbook
    except UNPACKING_ERRORS as exc:
        raise UnreadableWorkbook(
            f"{label} could not be unpacked ({type(exc).__name__}: {exc}); the file is damaged "
            "or truncated: ask for a fresh copy"
        ) from exc
    except MemoryError as exc:
        raise UnreadableWorkbook(
            f"{label} needs more memory than this audit may use; audit it alone or on a larger "
            "machine"
        ) from exc
    finally:
        if collecting:
            gc.enable()
