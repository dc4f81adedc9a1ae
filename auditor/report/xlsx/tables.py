"""The "Regressions" and "Findings" sheets of audit.xlsx: one Excel table each, filterable.

Regressions links every row to its detail sheet (inside audit.xlsx) and to the source cell (in the
audited workbook); Findings is sorted most severe first and links back the same way.
"""

from __future__ import annotations

from typing import Any

from xlsxwriter import Workbook

from auditor.model import SEVERITY_RANK, AuditResult, Finding, RegressionResult
from auditor.report.common import (
    TABLE_STATS,
    reported_and_intended,
    short_paths,
)
from auditor.report.evidence_words import evidence_words
from auditor.report.verdicts import row_verdict
from auditor.report.xlsx.layout import SheetWriter, add_table, print_setup
from auditor.report.xlsx.links import DetailRef, anchor_cell, internal_link
from auditor.report.xlsx.style import Styles

FINDING_HEADERS: tuple[str, ...] = (
    # Printed (PRINTED_FINDING_COLUMNS): what a signed page needs.
    "severity",
    "workbook",
    "cells",
    "message",
    "evidence",
    "fix",
    "decision",
    # On screen only: for filtering and following links.
    "check",
    "kind",
    "regression",
    "reason",
    "decided by",
    "decided on",
)
PRINTED_FINDING_COLUMNS = 7
WORKBOOK_WIDTH = 24  # the workbook columns, wrapped
VERDICT_WIDTH = 22  # the Regressions sheet's verdict, wrapped
CELLS_WIDTH = 22  # the Findings sheet's cells: the first cells show, the rest on screen
WRAPPED_FINDING_WIDTHS: dict[str, float] = {
    "message": 55,
    "evidence": 35,
    "fix": 45,
    "reason": 30,
}


def evidence_text(evidence: dict[str, Any]) -> str:
    """Evidence as a reviewer reads it (``evidence_words``); audit.json keeps every digit."""
    return evidence_words(evidence)


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


def findings_sheet(
    book: Workbook, result: AuditResult, styles: Styles, refs: list[DetailRef]
) -> None:
    sheet = book.add_worksheet("Findings")
    out = SheetWriter(sheet, styles)
    headers = list(FINDING_HEADERS)
    for col, name in enumerate(headers):
        out.header(0, col, name, filtered=True)
    detail = {(ref.workbook.path, ref.regression.id): ref.sheet for ref in refs}
    shown = short_paths(result)
    findings = ordered_findings(result)
    at = {name: index for index, name in enumerate(headers)}
    for row, (finding, path, regression_id) in enumerate(findings, start=1):
        out.put(row, at["severity"], finding.severity, styles.severity[finding.severity])
        out.put(row, at["workbook"], shown.get(path, path), styles.wrapped, wrap=True)
        if finding.cells:
            out.source(row, at["cells"], path, finding.cells[0], ", ".join(finding.cells))
        else:
            out.put(row, at["cells"], "", styles.top)
        out.put(row, at["message"], finding.message, styles.wrapped, wrap=True)
        out.put(row, at["evidence"], evidence_words(finding.evidence), styles.wrapped, wrap=True)
        out.put(row, at["fix"], finding.fix, styles.wrapped, wrap=True)
        decision = finding.decision or {}
        out.put(row, at["decision"], decision.get("decision", "open"), styles.top)
        out.put(row, at["check"], finding.check, styles.top)
        out.put(row, at["kind"], finding.kind, styles.top)
        target = detail.get((path, regression_id))
        if target:
            out.link(row, at["regression"], internal_link(target), regression_id)
        else:
            out.put(row, at["regression"], regression_id, styles.top)
        out.put(row, at["reason"], decision.get("reason", ""), styles.wrapped)
        out.put(row, at["decided by"], decision.get("name", ""), styles.top)
        out.put(row, at["decided on"], decision.get("date", ""), styles.top)
    fixed = {headers.index(name): width for name, width in WRAPPED_FINDING_WIDTHS.items()}
    fixed[headers.index("workbook")] = WORKBOOK_WIDTH
    fixed[headers.index("cells")] = CELLS_WIDTH
    out.apply_widths(maximum=40, fixed=fixed)
    add_table(sheet, "FindingsTable", headers, len(findings), styles)
    print_setup(sheet, "Findings")
    sheet.print_area(0, 0, len(findings), PRINTED_FINDING_COLUMNS - 1)
    sheet.repeat_rows(0)


def regression_headers() -> list[str]:
    """What a printed page needs first (it prints only those, PRINTED_COLUMNS), then the
    columns for working on screen."""
    headers = ["workbook", "regression", "n"]
    for label, _ in TABLE_STATS:
        headers += [f"{label} reported", f"{label} intended"]
    headers += ["verdict", "worst severity", "findings"]
    return (
        headers
        + ["sheet", "detail sheet", "source cell", "x range", "y range", "found by"]
        + ["x columns"]
    )


PRINTED_COLUMNS = 3 + 2 * len(TABLE_STATS) + 3  # workbook … findings


def _first_column_key(regression: RegressionResult, key: str) -> str:
    # Several x columns have no plain "slope": the table shows x1's, the detail sheet all.
    if regression.x_columns > 1 and key not in regression.reported:
        return f"{key}[1]"
    return key


def regressions_sheet(
    book: Workbook, result: AuditResult, styles: Styles, refs: list[DetailRef]
) -> None:
    sheet = book.add_worksheet("Regressions")
    out = SheetWriter(sheet, styles)
    headers = regression_headers()
    numeric = frozenset(
        h
        for h in headers
        if h in ("n", "x columns", "findings")
        or " " in h
        and h.split()[-1] in ("reported", "intended")
    )
    for col, name in enumerate(headers):
        out.header(0, col, name, filtered=True, numeric=name in numeric)
    shown = short_paths(result)
    stats = [key for _, key in TABLE_STATS]
    at = {name: index for index, name in enumerate(headers)}
    for row, ref in enumerate(refs, start=1):
        regression = ref.regression
        name = shown.get(ref.workbook.path, ref.workbook.path)
        out.put(row, at["workbook"], name, styles.wrapped, wrap=True)
        out.put(row, at["regression"], regression.id, styles.top)
        out.put(row, at["n"], regression.n, styles.number)
        col = at["n"] + 1
        for key in stats:
            reported, intended, verdict = reported_and_intended(
                regression, _first_column_key(regression, key)
            )
            out.num(row, col, reported, "mismatch" if verdict == "mismatch" else "plain")
            out.num(row, col + 1, intended)
            col += 2
        worst = regression.worst_severity
        verdict_shown = row_verdict(regression, stats)
        tone = verdict_shown.tone
        tone_format = styles.verdict.get(tone) or styles.for_severity(tone)
        out.put(row, at["verdict"], verdict_shown.text, tone_format, wrap=True)
        out.put(row, at["worst severity"], worst or "none", styles.for_severity(worst))
        out.put(row, at["findings"], len(regression.findings), styles.number)
        out.put(row, at["sheet"], regression.sheet, styles.top)
        if ref.detailed:
            out.link(row, at["detail sheet"], internal_link(ref.sheet), ref.sheet)
        else:
            out.put(row, at["detail sheet"], "none (no finding)", styles.top)
        out.source(row, at["source cell"], ref.workbook.path, anchor_cell(regression))
        out.put(row, at["x range"], regression.x_range, styles.top)
        out.put(row, at["y range"], regression.y_range, styles.top)
        out.put(row, at["found by"], regression.found_by, styles.top)
        out.put(row, at["x columns"], regression.x_columns, styles.number)
    # A long file name wraps rather than pushing the printed columns off the page.
    fixed = {at["workbook"]: WORKBOOK_WIDTH, at["verdict"]: VERDICT_WIDTH}
    out.apply_widths(maximum=45, fixed=fixed)
    add_table(sheet, "RegressionsTable", headers, len(refs), styles, numeric)
    sheet.freeze_panes(1, 2)  # the workbook and id stay in view while scrolling right
    print_setup(sheet, "Regressions")
    sheet.print_area(0, 0, len(refs), PRINTED_COLUMNS - 1)
    sheet.repeat_rows(0)
