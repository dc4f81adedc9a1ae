"""Names and links of audit.xlsx: detail-sheet names, links between sheets, links to sources.

Links to the source workbooks are HYPERLINK formulas rather than XlsxWriter's ``external:`` URLs:
XlsxWriter rewrites those into Windows paths, which breaks absolute POSIX paths. They are relative
to the folder audit.xlsx is written to (``link_base``), as a spreadsheet resolves a relative link
against the workbook's own folder: the report and its sources can move together (a shared drive,
an archive) and the links still open. Without a known folder they carry the absolute path.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import re
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from urllib.parse import quote

from auditor.grid import split_cell
from auditor.model import AuditResult, RegressionResult, WorkbookResult
from auditor.report.common import stat_order

SHEET_NAME_LIMIT = 31  # Excel's limit on a sheet name
FORBIDDEN_IN_SHEET_NAMES = re.compile(r"[\[\]:*?/\\]")
HYPERLINK_LIMIT = 255  # Excel refuses a longer link location in HYPERLINK()


@dataclass(frozen=True)
class DetailRef:
    """One regression and the name of its detail sheet."""

    workbook: WorkbookResult
    regression: RegressionResult
    sheet: str
    detailed: bool = True  # False: no detail sheet is written (no finding, default --detail)


def detail_sheet_name(index: int, width: int, regression_id: str) -> str:
    """'R07 Stability 25C E5': a running number (unique, stable) and the id (readable)."""
    cleaned = FORBIDDEN_IN_SHEET_NAMES.sub(" ", regression_id)
    cleaned = " ".join(cleaned.replace("'", "").split())
    return f"R{index:0{width}d} {cleaned}"[:SHEET_NAME_LIMIT].rstrip()


DETAIL_CHOICES = ("findings", "all")  # which regressions get a detail sheet (--detail)


def detail_refs(result: AuditResult, detail: str = "all") -> list[DetailRef]:
    """Every regression in reading order, each with its detail sheet's name; with ``detail``
    "findings" only those with a finding are ``detailed`` (the numbers stay those of "all", so
    R07 is the seventh row of the Regressions sheet either way)."""
    if detail not in DETAIL_CHOICES:
        raise ValueError(f"detail must be one of {DETAIL_CHOICES}, got {detail!r}")
    pairs = [(w, r) for w in result.workbooks for r in w.regressions]
    width = max(2, len(str(len(pairs))))
    return [
        DetailRef(
            workbook,
            regression,
            detail_sheet_name(index, width, regression.id),
            detail == "all" or bool(regression.findings),
        )
        for index, (workbook, regression) in enumerate(pairs, start=1)
    ]


def quote_sheet(name: str) -> str:
    return "'" + name.replace("'", "''") + "'"


def internal_link(sheet: str, cell: str = "A1") -> str:
    return f"internal:{quote_sheet(sheet)}!{cell}"


def plain_cell(cell: str) -> tuple[str, str]:
    """'My Sheet'!$E$5 -> ('My Sheet', 'E5'): sheet unquoted, address without ``$``."""
    sheet, address = split_cell(cell)
    return sheet.strip("'"), address.replace("$", "")


_LINK_BASE: contextvars.ContextVar[Path | None] = contextvars.ContextVar("base", default=None)
# The addresses made inside one link_base block, by workbook path: every regression of a
# workbook links to the same file, and resolving its path asks the file system each time.
_TARGETS: contextvars.ContextVar[dict[str, str] | None] = contextvars.ContextVar(
    "targets", default=None
)


@contextlib.contextmanager
def link_base(folder: Path | None) -> Iterator[None]:
    """Source links written inside the block are relative to ``folder`` (the report's folder)."""
    token = _LINK_BASE.set(None if folder is None else Path(folder).resolve())
    targets = _TARGETS.set({})
    try:
        yield
    finally:
        _TARGETS.reset(targets)
        _LINK_BASE.reset(token)


def file_target(path: str) -> str:
    """The workbook's address: relative to the report's folder when known, else a file URI."""
    made = _TARGETS.get()
    if made is None:
        return _file_target(path, _LINK_BASE.get())
    if path not in made:
        made[path] = _file_target(path, _LINK_BASE.get())
    return made[path]


def _file_target(path: str, base: Path | None) -> str:
    source = Path(path).resolve()
    if base is not None:
        try:
            relative = os.path.relpath(source, base)
        except ValueError:  # another drive on Windows: only an absolute link can reach it
            return source.as_uri()
        return quote(Path(relative).as_posix(), safe="/.-_~")
    return source.as_uri()


def source_link(path: str, cell: str) -> str | None:
    """The HYPERLINK target of a cell in a source workbook, or None when Excel cannot hold it."""
    sheet, address = plain_cell(cell)
    if not sheet or not address:
        return None
    first = address.split(":", 1)[0]
    target = f"{file_target(path)}#{quote_sheet(sheet)}!{first}"
    return target if len(target) <= HYPERLINK_LIMIT else None


def hyperlink_formula(target: str, text: str) -> str:
    def quoted(value: str) -> str:
        return '"' + value.replace('"', '""') + '"'

    return f"=HYPERLINK({quoted(target)},{quoted(text)})"


def anchor_cell(regression: RegressionResult) -> str:
    """The cell a reviewer should land on: the reported slope, else the first reported value."""
    if regression.reported:
        for key in ("slope", "slope[1]"):
            if key in regression.reported:
                return regression.reported[key].cell
        first = min(regression.reported, key=stat_order)
        return regression.reported[first].cell
    return regression.x_range
