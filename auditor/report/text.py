"""summary.txt: what a reviewer reads first, in a terminal or an e-mail.

Layout: a header (tool, policy, date, counts), then one section per workbook (its status, a table
of its regressions with reported against intended values, its findings most severe first), then
the caution paragraph. Only the result model is read; the text is plain UTF-8.
"""

from __future__ import annotations

import textwrap
from typing import BinaryIO

from tabulate import tabulate

from auditor.model import SEVERITIES, AuditResult, Finding, WorkbookResult, sort_findings
from auditor.report.common import (
    CAUTION,
    MISSING,
    NO_STORED_VALUES,
    TABLE_STATS,
    format_value,
    reported_and_intended,
    status_counts,
)
from auditor.report.text_calibration import policy_lines, run_summary

WIDTH = 100
INDENT = "    "
MISMATCH_MARK = "*"


def _wrap(text: str, indent: str = "") -> list[str]:
    # break_on_hyphens=False keeps check ids and cell ranges such as "p-one-tailed" whole.
    return textwrap.wrap(
        text,
        width=WIDTH,
        initial_indent=indent,
        subsequent_indent=indent,
        break_on_hyphens=False,
        break_long_words=False,
    ) or [indent.rstrip()]


def _header(result: AuditResult) -> list[str]:
    totals = result.totals()
    statuses = ", ".join(f"{name} {count}" for name, count in status_counts(result).items())
    severities = ", ".join(
        f"{name} {totals['findings_by_severity'].get(name, 0)}" for name in SEVERITIES
    )
    return [
        f"regaudit {result.version}: regression audit summary",
        f"policy: {result.policy}",
        f"date: {result.generated or 'not recorded'}",
        f"workbooks: {totals['workbooks']} ({statuses})",
        f"regressions: {totals['regressions']}",
        f"findings: {sum(totals['findings_by_severity'].values())} ({severities})",
    ]


def _pair(regression_key: str, reported: object, intended: object, verdict: str | None) -> str:
    mark = MISMATCH_MARK if verdict == "mismatch" else ""
    return (
        f"{format_value(regression_key, reported)}{mark} / {format_value(regression_key, intended)}"
    )


def regression_table(workbook: WorkbookResult) -> str:
    """One row per regression: each statistic as "reported / intended", then the verdict."""
    headers = ["regression", "n"] + [label for label, _ in TABLE_STATS] + ["verdict"]
    rows = []
    for regression in workbook.regressions:
        # A multiple regression gets one row per x column: keys slope[1], se_slope[1], ...
        suffixes = (
            [""]
            if regression.x_columns <= 1
            else [f"[{j}]" for j in range(1, regression.x_columns + 1)]
        )
        for suffix in suffixes:
            name = regression.id if not suffix else f"{regression.id} x{suffix[1:-1]}"
            row = [name, str(regression.n)]
            for _, key in TABLE_STATS:
                row.append(_pair(key, *reported_and_intended(regression, key + suffix)))
            row.append(regression.verdict)
            rows.append(row)
    align = ["left", "right"] + ["right"] * len(TABLE_STATS) + ["left"]
    return str(
        tabulate(rows, headers=headers, tablefmt="simple", disable_numparse=True, colalign=align)
    )


def finding_block(finding: Finding) -> list[str]:
    """``[MAJOR] check-id (kind) Sheet!E6`` then the message and the fix, indented."""
    title = f"[{finding.severity.upper()}] {finding.check}"
    if finding.kind:
        title += f" ({finding.kind})"
    if finding.cells:
        title += " " + ", ".join(finding.cells)
    lines = [title, *_wrap(finding.message, INDENT)]
    if finding.fix:
        lines += _wrap(f"fix: {finding.fix}", INDENT)
    return lines


def _workbook_section(workbook: WorkbookResult, run_policy: str = "") -> list[str]:
    lines = [f"== {workbook.path}: {workbook.status}"]
    if workbook.status == "unreadable":
        lines += _wrap(f"could not be read: {workbook.error or 'no reason was recorded'}", INDENT)
    elif workbook.error:
        lines += _wrap(f"note: {workbook.error}", INDENT)
    if not workbook.stored_values and workbook.status != "unreadable":
        lines += _wrap(NO_STORED_VALUES, INDENT)
    if workbook.regressions:
        legend = (
            f'Each statistic reads "reported / intended"; {MISMATCH_MARK} marks a reported value '
            f"that disagrees, {MISSING} a value that is absent."
        )
        lines += ["", *_wrap(legend), ""]
        lines += regression_table(workbook).splitlines()
        lines += policy_lines(workbook, run_policy)
    elif workbook.status == "no-regressions":
        lines += _wrap("No regression was found in this workbook.", INDENT)
    findings = sort_findings(workbook.all_findings())
    if findings:
        lines += ["", f"Findings ({len(findings)}, most severe first):"]
        for finding in findings:
            lines += ["", *finding_block(finding)]
    elif workbook.status != "unreadable":
        lines += ["", "No findings."]
    return lines


def render_text(result: AuditResult) -> str:
    lines = _header(result) + run_summary(result)
    for workbook in result.workbooks:
        lines += ["", *_workbook_section(workbook, result.policy)]
    lines += ["", *_wrap(CAUTION)]
    return "\n".join(line.rstrip() for line in lines) + "\n"


class TextReporter:
    """Writes summary.txt."""

    filename = "summary.txt"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(render_text(result).encode("utf-8"))
