"""The "Overview" sheet of audit.xlsx: what was audited and what came out, on one screen."""

from __future__ import annotations

from xlsxwriter import Workbook
from xlsxwriter.worksheet import Worksheet

from auditor.model import SEVERITIES, AuditResult
from auditor.report.common import CAUTION, NO_STORED_VALUES, SEVERITY_MEANING, status_counts
from auditor.report.xlsx_style import Styles, put

LABEL_WIDTH = 30
VALUE_WIDTH = 100
CAUTION_ROW_HEIGHT = 62  # merged cells are not fitted by Excel; this holds the paragraph


class _Cursor:
    """Writes label/value rows downwards, so sections can be added without counting rows."""

    def __init__(self, sheet: Worksheet, styles: Styles) -> None:
        self.sheet = sheet
        self.styles = styles
        self.row = 0

    def line(
        self,
        label: object,
        value: object = None,
        label_format: object = None,
        value_format: object = None,
    ) -> None:
        put(self.sheet, self.row, 0, label, label_format or self.styles.label)
        if value is not None:
            put(self.sheet, self.row, 1, value, value_format or self.styles.wrapped)
        self.row += 1

    def section(self, title: str) -> None:
        self.row += 1  # a blank row before every section
        put(self.sheet, self.row, 0, title, self.styles.section)
        put(self.sheet, self.row, 1, "", self.styles.section)
        self.row += 1


def overview_sheet(book: Workbook, result: AuditResult, styles: Styles) -> None:
    sheet = book.add_worksheet("Overview")
    sheet.set_column(0, 0, LABEL_WIDTH)
    sheet.set_column(1, 1, VALUE_WIDTH)
    out = _Cursor(sheet, styles)
    out.line("regaudit audit overview", label_format=styles.title)

    out.section("What was audited")
    out.line("Tool", f"regaudit {result.version}")
    out.line("Policy", result.policy)
    out.line("Date", result.generated or "not recorded")
    inputs = result.inputs or [workbook.path for workbook in result.workbooks]
    for index, source in enumerate(inputs):
        out.line("Inputs" if index == 0 else "", source)
    computed = [
        w.path for w in result.workbooks if not w.stored_values and w.status != "unreadable"
    ]
    for index, path in enumerate(computed):
        out.line("Computed values" if index == 0 else "", f"{path}: {NO_STORED_VALUES}")

    totals = result.totals()
    out.section("Workbooks by status")
    for status, count in status_counts(result).items():
        out.line(status, count, label_format=styles.top, value_format=styles.top)
    out.line("regressions found", totals["regressions"], value_format=styles.top)

    out.section("Findings by severity")
    for severity in SEVERITIES:
        count = totals["findings_by_severity"].get(severity, 0)
        out.line(severity, count, styles.severity[severity], styles.top)

    out.section("Files that could not be read")
    unreadable = [w for w in result.workbooks if w.status == "unreadable"]
    for workbook in unreadable:
        out.line(workbook.path, workbook.error or "no reason was recorded", styles.top)
    if not unreadable:
        out.line("none", label_format=styles.top)

    out.section("Severity legend")
    for severity in SEVERITIES:
        out.line(severity, SEVERITY_MEANING[severity], styles.severity[severity])
    out.line(
        "mismatch",
        "On the Regressions sheet a reported value shown bold on a pale fill disagrees with the "
        'recomputation; its "verdict" column then reads mismatch.',
        styles.mismatch,
    )

    out.section("Caution")
    sheet.merge_range(out.row, 0, out.row, 1, CAUTION, styles.caution)
    sheet.set_row(out.row, CAUTION_ROW_HEIGHT)
    sheet.activate()  # the reviewer lands on the overview
