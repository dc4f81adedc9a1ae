"""audit.xlsx: the reviewer's workbook, written with XlsxWriter.

Sheets, in order:

    Overview       what was audited, the counts, unreadable files, legends, the caution
    Regressions    one row per regression (an Excel table) linked to its detail sheet and source
    Findings       one row per finding, most severe first (an Excel table)
    R01 …, R02 …   one detail sheet per regression with a finding (each with ``detail="all"``):
                   statistics, live formulas, design, findings, the data snapshot, two charts

The file is reproducible: the same result gives the same bytes. XlsxWriter stamps the document
with the current time unless told otherwise, so the creation date comes from ``result.generated``;
``in_memory`` makes every part inside the zip carry the same fixed timestamp and file mode. Links
into the source workbooks carry their absolute paths, so they depend on the folder the audit was
run from, as the paths in audit.json do.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import UTC, datetime
from pathlib import Path
from typing import BinaryIO

from xlsxwriter import Workbook

from auditor.model import AuditResult
from auditor.report.common import AnnotatedCopy
from auditor.report.xlsx.calibration import curves_sheet
from auditor.report.xlsx.links import detail_refs, link_base
from auditor.report.xlsx.overview import overview_sheet
from auditor.report.xlsx.style import Styles
from auditor.report.xlsx.tables import (
    evidence_text,
    findings_sheet,
    ordered_findings,
    regression_headers,
    regressions_sheet,
)

# Used when a result carries no date: any fixed value keeps the output reproducible.
FALLBACK_CREATED = datetime(2000, 1, 1)


def created_date(generated: str) -> datetime:
    """The document's creation date from the result's ISO date (naive UTC, as XlsxWriter wants)."""
    try:
        parsed = datetime.fromisoformat(generated.strip())
    except ValueError:
        return FALLBACK_CREATED
    if parsed.tzinfo is not None:
        parsed = parsed.astimezone(UTC).replace(tzinfo=None)
    return parsed


class XlsxReporter:
    """Writes audit.xlsx; ``copies`` are the annotated copies made beside it, if any."""

    filename = "audit.xlsx"

    def __init__(
        self,
        copies: Sequence[AnnotatedCopy] = (),
        detail: str = "findings",
        folder: Path | None = None,
    ) -> None:
        self.copies = tuple(copies)
        self.detail = detail  # "findings": a detail sheet per regression with a finding; "all"
        self.folder = folder  # where audit.xlsx goes: source links are relative to it

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        with link_base(self.folder):
            self._write(result, handle)

    def _write(self, result: AuditResult, handle: BinaryIO) -> None:
        book = Workbook(handle, {"constant_memory": False, "in_memory": True})
        book.set_properties(
            {
                "title": "regaudit audit",
                "subject": f"regression audit, policy {result.policy}",
                "author": f"regaudit {result.version}",
                "created": created_date(result.generated),
            }
        )
        # LibreOffice and Excel then show the stored values until asked to recalculate; a
        # reviewer who recalculates sees the spreadsheet's own results beside regaudit's.
        book.set_calc_mode("auto")
        styles = Styles(book)
        refs = detail_refs(result, self.detail)
        detailed = [ref for ref in refs if ref.detailed]
        overview_sheet(book, result, styles, detailed, self.copies)
        regressions_sheet(book, result, styles, refs)
        findings_sheet(book, result, styles, detailed)
        curves_sheet(book, result, styles, refs)  # only when some curve is a calibration
        if detailed:  # charts, live formulas, data snapshots: imported when a sheet needs them
            from auditor.report.xlsx.detail import detail_sheet

            for ref in detailed:
                detail_sheet(book, styles, ref)
        book.close()


__all__ = [
    "XlsxReporter",
    "evidence_text",
    "created_date",
    "ordered_findings",
    "regression_headers",
]
