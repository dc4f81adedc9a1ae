"""The "Overview" sheet of audit.xlsx: what was audited and what came out, on one screen."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from xlsxwriter import Workbook
from xlsxwriter.worksheet import Worksheet

from auditor.model import SEVERITIES, AuditResult
from auditor.report.common import (
    CAUTION,
    NO_STORED_VALUES,
    SEVERITY_MEANING,
    TABLE_STATS,
    THREE_VALUES,
    VERDICT_MEANING,
    AnnotatedCopy,
    copy_caveat,
    status_counts,
)
from auditor.report.verdicts import CATEGORIES, failure_words, verdict_categories
from auditor.report.xlsx.layout import LINE_HEIGHT, print_setup, text_lines
from auditor.report.xlsx.links import DetailRef, internal_link
from auditor.report.xlsx.style import VERDICT_PALETTE, Styles, put

LABEL_WIDTH = 30
VALUE_WIDTH = 100
COPIES_NOTE = (
    "The audited workbook with a note (message and fix) and a light fill on every flagged cell, "
    "and a note on the first sheet's A1 saying where it came from. The original is never "
    "changed. Formulas keep their text and recalculate when the copy is opened; content the "
    "copying library cannot carry over faithfully is named below, copy by copy."
)
CATEGORY_TONES = dict(
    zip(CATEGORIES, ("mismatch", "", "unverifiable", "confirmed", "unverifiable"), strict=True)
)
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
        label_format = label_format or self.styles.label
        value_format = value_format or self.styles.wrapped
        put(self.sheet, self.row, 0, label, label_format)
        if value is not None:
            put(self.sheet, self.row, 1, value, value_format)
        # LibreOffice keeps the default height for wrapped text, so rows get theirs explicitly.
        lines = text_lines(str(value), VALUE_WIDTH) if isinstance(value, str) else 1
        if label_format is self.styles.wrapped and isinstance(label, str):
            lines = max(lines, text_lines(label, LABEL_WIDTH))
        if lines > 1:
            self.sheet.set_row(self.row, LINE_HEIGHT * lines)
        self.row += 1

    def link(self, label: str, sheet_name: str, text: str) -> None:
        put(self.sheet, self.row, 0, label, self.styles.label)
        self.sheet.write_url(self.row, 1, internal_link(sheet_name), self.styles.link, string=text)
        self.row += 1

    def section(self, title: str) -> None:
        self.row += 1  # a blank row before every section
        put(self.sheet, self.row, 0, title, self.styles.section)
        put(self.sheet, self.row, 1, "", self.styles.section)
        self.row += 1


def verdict_counts(result: AuditResult) -> tuple[dict[str, int], dict[str, int]]:
    """Regressions by verdict, and reported statistics by verdict; every verdict listed."""
    regressions = {name: 0 for name in VERDICT_PALETTE}
    statistics = {name: 0 for name in VERDICT_PALETTE}
    for workbook in result.workbooks:
        for regression in workbook.regressions:
            regressions[regression.verdict] += 1
            for reported in regression.reported.values():
                statistics[reported.verdict] += 1
    return regressions, statistics


def _audited(out: _Cursor, result: AuditResult) -> None:
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


def _counts(out: _Cursor, result: AuditResult) -> None:
    styles = out.styles
    totals = result.totals()
    out.section("Workbooks by status")
    for status, count in status_counts(result).items():
        out.line(status, count, label_format=styles.top, value_format=styles.count)
    out.line("regressions found", totals["regressions"], value_format=styles.count)

    _, statistics = verdict_counts(result)
    regressions = [r for w in result.workbooks for r in w.regressions]
    out.section("Regressions by outcome")
    for category, count in verdict_categories(regressions, [k for _, k in TABLE_STATS]).items():
        tone = CATEGORY_TONES[category]
        out.line(category, count, styles.for_verdict(tone), styles.count)
    out.section("Reported statistics by verdict")
    for verdict, count in statistics.items():
        if count:  # a zero beside findings that say otherwise reads as a contradiction
            out.line(verdict, count, styles.verdict[verdict], styles.count)

    out.section("Findings by severity")
    for severity in SEVERITIES:
        count = totals["findings_by_severity"].get(severity, 0)
        out.line(severity, count, styles.severity[severity], styles.count)


def _copies(out: _Cursor, copies: Sequence[AnnotatedCopy]) -> None:
    """One line per copy; what copies lose in general is said once, what one loses beside it."""
    if not copies:
        return
    out.section("Annotated copies")
    folders = sorted({str(Path(copy.copy).parent) for copy in copies})
    out.line("Folder", ", ".join(folders))
    out.line("What a copy is", COPIES_NOTE)
    for index, copy in enumerate(copies):
        text = f"{Path(copy.copy).name}: copy of {copy.source}, notes on {copy.notes} cell(s)."
        if copy.error:
            text = f"{copy.source}: {copy.error}"
        elif copy.may_lose:
            text += " " + copy_caveat(copy)
        out.line("Copies" if index == 0 else "", text)


def _guide(out: _Cursor, refs: list[DetailRef]) -> None:
    out.section("How to read this workbook")
    out.link("Regressions", "Regressions", "one row per regression; its link opens the detail")
    out.link("Findings", "Findings", "one row per finding, most severe first")
    if refs:
        out.link(
            "Detail sheets",
            refs[0].sheet,
            f"{len(refs)} sheets named R01, R02, …: the data, the three values of every "
            "statistic, live formulas and two charts per regression",
        )
    for name, meaning in THREE_VALUES:
        out.line(name, meaning)


def _legend(out: _Cursor) -> None:
    styles = out.styles
    out.section("Severity legend")
    for severity in SEVERITIES:
        out.line(severity, SEVERITY_MEANING[severity], styles.severity[severity])
    out.section("Verdict legend")
    for verdict, meaning in VERDICT_MEANING.items():
        out.line(verdict, meaning, styles.verdict[verdict])
    out.line(
        "reported value",
        "A reported value shown bold on the plum fill disagrees with the recomputation; its "
        'verdict then reads "mismatch". The word is always in the cell, the colour only helps.',
        styles.mismatch,
    )
    out.line(
        "live formula",
        "Cells on this pale green hold live formulas over a detail sheet's snapshot, stored with "
        "regaudit's values; recalculate to see the spreadsheet's own result.",
        styles.live,
    )


def overview_sheet(
    book: Workbook,
    result: AuditResult,
    styles: Styles,
    refs: list[DetailRef],
    copies: Sequence[AnnotatedCopy] = (),
) -> None:
    sheet = book.add_worksheet("Overview")
    sheet.set_column(0, 0, LABEL_WIDTH)
    sheet.set_column(1, 1, VALUE_WIDTH)
    out = _Cursor(sheet, styles)
    out.line("regaudit audit overview", label_format=styles.title)
    _audited(out, result)
    _counts(out, result)

    out.section("Files not audited, and why")
    unreadable = [w for w in result.workbooks if w.status == "unreadable"]
    for workbook in unreadable:
        reason = f"{failure_words(workbook)}: {workbook.error or 'no reason was recorded'}"
        out.line(workbook.path, reason, styles.wrapped)
    if not unreadable:
        out.line("none", label_format=styles.top)
    if result.skipped:
        out.section("Files of other formats, not audited")
        for skipped in result.skipped:
            out.line(skipped.path, skipped.reason, styles.wrapped)

    out.section("Inputs and their SHA-256 (the content this record is about)")
    for workbook in result.workbooks:
        out.line(workbook.path, workbook.sha256 or "not computed: the file could not be read")

    _copies(out, copies)
    _guide(out, refs)
    _legend(out)

    out.section("Caution")
    sheet.merge_range(out.row, 0, out.row, 1, CAUTION, styles.caution)
    sheet.set_row(out.row, CAUTION_ROW_HEIGHT)
    print_setup(sheet, "Overview")
    sheet.activate()  # the reviewer lands on the overview
