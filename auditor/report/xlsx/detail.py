"""One detail sheet per regression: everything a reviewer needs to check it by hand.

Top to bottom: what the regression is and where it lives (with the two charts beside it), the
statistics with their three values and verdicts, the same statistics recomputed by live formulas,
the design of x, the findings, and the data snapshot those formulas and charts read. Section rows
are planned before anything is written, because the formulas near the top refer to snapshot
ranges at the bottom.
"""

from __future__ import annotations

from typing import Any

from xlsxwriter import Workbook

from auditor.model import RegressionResult, ReportedValue
from auditor.report.common import finite_or_none, stat_label, stat_order
from auditor.report.verdicts import row_verdict
from auditor.report.xlsx.charts import insert_charts
from auditor.report.xlsx.layout import SheetWriter, print_setup
from auditor.report.xlsx.links import DetailRef, anchor_cell, internal_link
from auditor.report.xlsx.live import design_height, live_height, write_design, write_live
from auditor.report.xlsx.snapshot import write_snapshot
from auditor.report.xlsx.style import Styles

IDENT_TOP = 3
CHART_ROWS = 16  # the charts' height in default rows, plus one
STAT_HEADERS = (
    "statistic",
    "reported",
    "as written",
    "intended",
    "verdict",
    "tolerance used",
    "source",
    "cell",
    "author's formula",
    "note",
)
NOTE_WIDTH = 36


def _identification(ref: DetailRef) -> list[tuple[str, Any, str]]:
    """(label, value, style name) rows of the block at the top."""
    regression = ref.regression
    worst = regression.worst_severity
    shown = row_verdict(regression, regression.reported)  # the sheet shows every statistic
    rows: list[tuple[str, Any, str]] = [
        ("workbook", ref.workbook.path, "top"),
        ("sheet", regression.sheet, "top"),
    ]
    if regression.label:
        rows.append(("title in the workbook", regression.label, "top"))
    rows += [
        ("x range, author's formula", regression.x_range, "top"),
        ("y range, author's formula", regression.y_range, "top"),
        ("x range, intended table", regression.intended_x_range or regression.x_range, "top"),
        ("y range, intended table", regression.intended_y_range or regression.y_range, "top"),
        ("found by", regression.found_by, "top"),
        ("points used (n)", regression.n, "number"),
        ("x columns", regression.x_columns, "number"),
        ("intercept", "fitted" if regression.intercept else "forced through zero", "top"),
        ("verdict", shown.text, f"verdict:{shown.tone}"),
        ("worst severity", worst or "none", f"severity:{worst}"),
        ("findings", len(regression.findings), "number"),
    ]
    if not ref.workbook.stored_values:
        rows.append(("stored values", "none in the file: reported values were computed", "top"))
    rows += _conditioning_rows(regression.conditioning)
    return rows


def _conditioning_rows(conditioning: dict[str, Any]) -> list[tuple[str, Any, str]]:
    """The design's condition number and the digits it leaves a double-precision engine."""
    if not conditioning:
        return []
    solver = conditioning.get("solver")
    how = {
        "exact": "exact arithmetic on the stored values",
        "refined": "double precision, refined with residuals in twice the precision",
    }.get(str(solver), "double precision (well conditioned)")
    return [
        ("condition number", conditioning.get("condition_number"), "top"),
        ("digits left to an engine", conditioning.get("digits_left"), "top"),
        ("intended values computed in", how, "top"),
    ]


def _style(styles: Styles, name: str) -> Any:
    if name.startswith("verdict:"):
        tone = name.split(":", 1)[1]  # a verdict, or a severity when values agree (verdicts.py)
        return styles.verdict.get(tone) or styles.for_severity(tone)
    if name.startswith("severity:"):
        return styles.for_severity(name.split(":", 1)[1])
    return styles.count if name == "number" else styles.top  # counts sit left, beside text


def stat_rows(regression: RegressionResult) -> list[tuple[str, ReportedValue | None, Any]]:
    """Every reported statistic and every intended one, in reading order."""
    # In the model's own order before sorting (not a set, whose order varies from run to run
    # with string hashing): statistics stat_order ranks alike keep it, and the file its bytes.
    intended_keys = [k for k, v in regression.intended.items() if finite_or_none(v) is not None]
    keys = dict.fromkeys([*regression.reported, *intended_keys])
    rows = []
    for key in sorted(keys, key=stat_order):
        reported = regression.reported.get(key)
        intended = reported.intended if reported and reported.intended is not None else None
        if intended is None:
            intended = regression.intended.get(key.split("@", 1)[0])
        rows.append((key, reported, intended))
    return rows


def _statistics(out: SheetWriter, ref: DetailRef, top: int) -> None:
    styles = out.styles
    out.put(top, 0, "Statistics: reported, as written, intended", styles.section, fit=False)
    for col, text in enumerate(STAT_HEADERS):
        out.header(top + 1, col, text, numeric=col in (1, 2, 3))
    for offset, (key, reported, intended) in enumerate(stat_rows(ref.regression)):
        row = top + 2 + offset
        out.put(row, 0, stat_label(key), styles.top)
        out.num(row, 3, intended)
        if reported is None:
            out.put(row, 4, "not reported", styles.muted_indented)
            continue
        kind = "mismatch" if reported.verdict == "mismatch" else "plain"
        if reported.source in ("typed", "text"):
            # A typed figure is shown as the author typed it: its digits are its precision.
            typed_format = styles.mismatch if kind == "mismatch" else styles.number
            out.put(row, 1, reported.value, typed_format)
        else:
            out.num(row, 1, reported.value, kind)
        out.num(row, 2, reported.as_written)
        out.put(row, 4, reported.verdict, styles.for_verdict(reported.verdict))
        out.put(row, 5, reported.tolerance, styles.top)
        out.put(row, 6, reported.source, styles.top)
        out.source(row, 7, ref.workbook.path, reported.cell)
        # As the author sees it in the formula bar: without the file format's "_xlfn." prefix.
        shown_formula = (reported.formula or "").replace("_xlfn.", "")
        out.put(row, 8, shown_formula, styles.formula_text)
        out.put(row, 9, reported.note, styles.wrapped, wrap=True)


def _findings(out: SheetWriter, ref: DetailRef, top: int, last_col: int) -> None:
    """Findings of this regression, message and fix in one merged cell across the sheet."""
    styles = out.styles
    out.put(top, 0, "Findings", styles.section, fit=False)
    findings = ref.regression.findings
    if not findings:
        out.put(top + 1, 0, "none", styles.muted, fit=False)
        return
    for col, text in enumerate(("severity", "check", "kind", "cells")):
        out.header(top + 1, col, text)
    out.sheet.merge_range(top + 1, 4, top + 1, last_col, "message and fix", styles.header)
    for offset, finding in enumerate(findings):
        row = top + 2 + offset
        out.put(row, 0, finding.severity, styles.severity[finding.severity])
        out.put(row, 1, finding.check, styles.top)
        out.put(row, 2, finding.kind, styles.top)
        if finding.cells:
            out.source(row, 3, ref.workbook.path, finding.cells[0], ", ".join(finding.cells))
        else:
            out.put(row, 3, "", styles.top)
        text = finding.message + (f"\nFix: {finding.fix}" if finding.fix else "")
        out.merge(row, 4, last_col, text, styles.wrapped)


def _findings_height(regression: RegressionResult) -> int:
    # title, header and one row per finding; or title and "none"
    return 2 + len(regression.findings) if regression.findings else 2


def detail_sheet(book: Workbook, styles: Styles, ref: DetailRef) -> None:
    regression = ref.regression
    sheet = book.add_worksheet(ref.sheet)
    out = SheetWriter(sheet, styles)
    title = f"{ref.sheet}: regression {regression.id}"
    out.put(0, 0, title, styles.title, fit=False)
    out.link(1, 0, internal_link("Regressions"), "back to Regressions", fit=False)
    out.source(1, 1, ref.workbook.path, anchor_cell(regression), "open the source cell", fit=False)

    ident = _identification(ref)
    for offset, (label, value, style) in enumerate(ident):
        out.put(IDENT_TOP + offset, 0, label, styles.label)
        out.put(IDENT_TOP + offset, 1, value, _style(styles, style), fit=False)

    # Plan the sections, then write them; the formulas need the snapshot's position.
    stats_top = IDENT_TOP + max(len(ident), CHART_ROWS) + 1
    live_top = stats_top + 2 + len(stat_rows(regression)) + 1
    design_top = live_top + live_height(regression) + 1
    findings_top = design_top + design_height(regression) + 1
    snapshot_top = findings_top + _findings_height(regression) + 1

    snapshot = write_snapshot(out, ref.sheet, regression, snapshot_top)
    _statistics(out, ref, stats_top)
    write_live(out, regression, live_top, snapshot.ranges)
    write_design(out, regression, design_top, snapshot.ranges)
    _findings(out, ref, findings_top, snapshot.reason_col)

    # Wrapped columns get a fixed width only when they hold text; empty, they fit their header.
    fixed = {col: NOTE_WIDTH for col in (9, snapshot.reason_col) if col in out.wrapped_columns}
    widths = out.apply_widths(maximum=44, fixed=fixed)

    # The charts go right of the longest identification value, so they never cover it.
    longest = max(len(str(value)) for _, value, _ in ident) + 2
    chart_col, covered = 1, 0.0
    while covered < longest:
        covered += widths.get(chart_col, 8.43)
        chart_col += 1
    insert_charts(book, sheet, snapshot.chart, IDENT_TOP, chart_col)
    print_setup(sheet, ref.sheet)
