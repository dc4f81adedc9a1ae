"""The "Curves" sheet of audit.xlsx: the calibration run summary, one row per curve with each
acceptance verdict, linked to the curve's detail sheet. Written only when some regression was
judged as a calibration; reads the result model only."""

from __future__ import annotations

from xlsxwriter import Workbook

from auditor.model import AuditResult
from auditor.report.common import short_paths
from auditor.report.text_calibration import RUN_COLUMNS, RUN_NOTE
from auditor.report.xlsx.layout import SheetWriter, add_table, print_setup
from auditor.report.xlsx.links import DetailRef, internal_link
from auditor.report.xlsx.style import Styles

SHEET = "Curves"


def curves_sheet(
    book: Workbook, result: AuditResult, styles: Styles, refs: list[DetailRef]
) -> None:
    curves = [ref for ref in refs if ref.regression.calibration]
    if not curves:
        return
    sheet = book.add_worksheet(SHEET)
    out = SheetWriter(sheet, styles)
    headers = ["workbook", "detail sheet", *[heading for _, heading in RUN_COLUMNS], "policy"]
    for col, name in enumerate(headers):
        out.header(0, col, name, filtered=True)
    shown = short_paths(result)
    for row, ref in enumerate(curves, start=1):
        summary = ref.regression.calibration
        out.put(row, 0, shown.get(ref.workbook.path, ref.workbook.path), styles.top)
        if ref.detailed:
            out.link(row, 1, internal_link(ref.sheet), ref.sheet)
        else:
            out.put(row, 1, "none (no finding)", styles.top)
        for col, (key, _) in enumerate(RUN_COLUMNS, start=2):
            value = str(summary.get(key, "—"))
            style = styles.for_verdict("mismatch") if value.startswith("fail") else styles.top
            out.put(row, col, value, style)
        out.put(row, len(headers) - 1, ref.regression.policy_reason, styles.wrapped, wrap=True)
    out.apply_widths(maximum=45)
    add_table(sheet, "CurvesTable", headers, len(curves), styles)
    out.put(len(curves) + 2, 0, RUN_NOTE, styles.wrapped, wrap=True)
    print_setup(sheet, SHEET)
    sheet.repeat_rows(0)
