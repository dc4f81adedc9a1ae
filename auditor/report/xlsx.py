"""audit.xlsx: the reviewer's workbook, written with XlsxWriter.

Sheets: "Overview" (what was audited, the counts, unreadable files, the severity legend, the
caution), "Findings" (one row per finding, most severe first) and "Regressions" (one row per
regression, reported against intended). Findings and Regressions are Excel tables, so a reviewer
can filter and sort them at once.

The file is reproducible: the same result gives the same bytes. XlsxWriter stamps the document
with the current time unless told otherwise, so the creation date comes from ``result.generated``;
``in_memory`` makes every part inside the zip carry the same fixed timestamp and file mode.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime
from typing import Any, BinaryIO

from xlsxwriter import Workbook
from xlsxwriter.worksheet import Worksheet

from auditor.model import SEVERITY_RANK, AuditResult, Finding
from auditor.report.common import TABLE_STATS, plain, reported_and_intended
from auditor.report.xlsx_overview import overview_sheet
from auditor.report.xlsx_style import Styles, put

# Used when a result carries no date: any fixed value keeps the output reproducible.
FALLBACK_CREATED = datetime(2000, 1, 1)

FINDING_COLUMNS: tuple[tuple[str, float], ...] = (
    ("severity", 11),
    ("check", 24),
    ("kind", 22),
    ("workbook", 32),
    ("regression", 14),
    ("cells", 22),
    ("message", 60),
    ("evidence", 40),
    ("fix", 50),
)
WRAPPED_FINDING_COLUMNS = {"message", "evidence", "fix"}


def created_date(generated: str) -> datetime:
    """The document's creation date from the result's ISO date (naive UTC, as XlsxWriter wants)."""
    try:
        parsed = datetime.fromisoformat(generated.strip())
    except ValueError:
        return FALLBACK_CREATED
    if parsed.tzinfo is not None:
        parsed = parsed.astimezone(UTC).replace(tzinfo=None)
    return parsed


def compact_json(evidence: dict[str, Any]) -> str:
    if not evidence:
        return ""
    return json.dumps(plain(evidence), ensure_ascii=False, allow_nan=False, separators=(", ", ": "))


def add_table(sheet: Worksheet, name: str, headers: list[str], rows: int, styles: Styles) -> None:
    """An Excel table over the header and ``rows`` data rows, with filters and a frozen header."""
    last_row = max(rows, 1)  # a table needs one data row; an empty result gets a blank one
    columns = [{"header": header, "header_format": styles.header} for header in headers]
    sheet.add_table(
        0,
        0,
        last_row,
        len(headers) - 1,
        {"name": name, "columns": columns, "style": "Table Style Light 1", "autofilter": True},
    )
    sheet.freeze_panes(1, 0)


def ordered_findings(result: AuditResult) -> list[tuple[Finding, str, str]]:
    """Every finding with its workbook path and regression id, most severe first.

    Within one severity, findings keep the order of the workbooks, then check id and cells.
    """
    rows: list[tuple[tuple[Any, ...], Finding, str, str]] = []
    for index, workbook in enumerate(result.workbooks):
        owned = [(finding, "") for finding in workbook.findings]
        owned += [
            (f, regression.id) for regression in workbook.regressions for f in regression.findings
        ]
        for finding, regression_id in owned:
            key = (SEVERITY_RANK[finding.severity], index, finding.check, finding.cells)
            rows.append((key, finding, workbook.path, regression_id))
    rows.sort(key=lambda item: item[0])
    return [(finding, path, regression_id) for _, finding, path, regression_id in rows]


def findings_sheet(book: Workbook, result: AuditResult, styles: Styles) -> None:
    sheet = book.add_worksheet("Findings")
    headers = [name for name, _ in FINDING_COLUMNS]
    for col, (_, width) in enumerate(FINDING_COLUMNS):
        sheet.set_column(col, col, width)
    findings = ordered_findings(result)
    for row, (finding, path, regression_id) in enumerate(findings, start=1):
        values = {
            "severity": finding.severity,
            "check": finding.check,
            "kind": finding.kind,
            "workbook": path,
            "regression": regression_id,
            "cells": ", ".join(finding.cells),
            "message": finding.message,
            "evidence": compact_json(finding.evidence),
            "fix": finding.fix,
        }
        for col, name in enumerate(headers):
            if name == "severity":
                cell_format = styles.severity[finding.severity]
            elif name in WRAPPED_FINDING_COLUMNS:
                cell_format = styles.wrapped
            else:
                cell_format = styles.top
            put(sheet, row, col, values[name], cell_format)
    add_table(sheet, "FindingsTable", headers, len(findings), styles)


def regression_headers() -> list[str]:
    headers = ["workbook", "sheet", "regression", "x range", "y range", "found by", "n"]
    for label, _ in TABLE_STATS:
        headers += [f"{label} reported", f"{label} intended"]
    return headers + ["verdict", "worst severity", "findings"]


def regressions_sheet(book: Workbook, result: AuditResult, styles: Styles) -> None:
    sheet = book.add_worksheet("Regressions")
    headers = regression_headers()
    widths = [32, 14, 14, 18, 18, 10, 6] + [13] * (2 * len(TABLE_STATS)) + [13, 14, 9]
    for col, width in enumerate(widths):
        sheet.set_column(col, col, width)
    row = 0
    for workbook in result.workbooks:
        for regression in workbook.regressions:
            row += 1
            cells: list[tuple[Any, Any]] = [
                (workbook.path, styles.top),
                (regression.sheet, styles.top),
                (regression.id, styles.top),
                (regression.x_range, styles.top),
                (regression.y_range, styles.top),
                (regression.found_by, styles.top),
                (regression.n, styles.number),
            ]
            for _, key in TABLE_STATS:
                reported, intended, verdict = reported_and_intended(regression, key)
                mismatch = verdict == "mismatch"
                cells.append((reported, styles.mismatch if mismatch else styles.number))
                cells.append((intended, styles.number))
            worst = regression.worst_severity
            cells += [
                (regression.verdict, styles.top),
                (worst or "none", styles.severity[worst] if worst else styles.top),
                (len(regression.findings), styles.number),
            ]
            for col, (value, cell_format) in enumerate(cells):
                put(sheet, row, col, value, cell_format)
    add_table(sheet, "RegressionsTable", headers, row, styles)


class XlsxReporter:
    """Writes audit.xlsx."""

    filename = "audit.xlsx"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        book = Workbook(handle, {"constant_memory": False, "in_memory": True})
        book.set_properties(
            {
                "title": "regaudit audit",
                "subject": f"regression audit, policy {result.policy}",
                "author": f"regaudit {result.version}",
                "created": created_date(result.generated),
            }
        )
        styles = Styles(book)
        overview_sheet(book, result, styles)
        findings_sheet(book, result, styles)
        regressions_sheet(book, result, styles)
        book.close()
