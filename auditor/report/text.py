"""summary.txt: what a reviewer reads first, in a terminal or an e-mail.

Layout: a header (tool, policy, date, counts) and the legend, said once; the files of other formats
that were not audited; one short section per workbook (a title line with its counts, a table of
its regressions, its findings most severe first); advice that recurs in several fixes, once; then
the caution paragraph. Only the result model is read; the text is plain UTF-8.
"""

from __future__ import annotations

import re
import textwrap
from typing import BinaryIO

from tabulate import tabulate

from auditor.model import SEVERITIES, AuditResult, Finding, WorkbookResult
from auditor.report.common import (
    CAUTION,
    MISSING,
    NO_STORED_VALUES,
    TABLE_STATS,
    format_value,
    reported_and_intended,
    short_paths,
    sort_findings,
    status_counts,
)
from auditor.report.text_calibration import policy_lines, run_summary
from auditor.report.verdicts import failure_words, row_verdict

WIDTH = 100
INDENT = "    "
MISMATCH_MARK = "*"
BRIEF_SEVERITIES = ("minor", "info")  # repeats of these are shortened; major ones never
ADVICE_MIN_LENGTH = 60  # shorter recurring sentences are cheaper to repeat than to look up


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
    lines = [
        f"regaudit {result.version}: regression audit summary",
        f"policy: {result.policy}",
        f"date: {result.generated or 'not recorded'}",
        f"workbooks: {totals['workbooks']} ({statuses})",
        f"regressions: {totals['regressions']}",
        f"findings: {sum(totals['findings_by_severity'].values())} ({severities})",
    ]
    if result.skipped:
        lines.append(f"not audited: {len(result.skipped)} file(s) of other formats (listed below)")
    return lines


def _legend() -> list[str]:
    """Said once, before the first workbook."""
    lines = ["How to read the tables:"]
    lines += _wrap(
        "A statistic shown once: the reported value and regaudit's own fit of the data agree. "
        f'"a{MISMATCH_MARK} / b": the reported a disagrees with b, the value the data give; '
        f'"a / b" without the mark: they agree at the precision a carries; "{MISSING} / b": '
        "nothing is reported, b is what the data give.",
        INDENT,
    )
    lines += _wrap(
        "The verdict covers every reported statistic, including those the table does not show "
        '("mismatch in R²" names them), and says when values agree but a major finding stands.',
        INDENT,
    )
    lines += _wrap(
        "Severity: critical, the conclusion changes; major, a value is wrong beyond its "
        "precision or the design cannot support the claim; minor, a risk that changes no "
        "number today; info, context.",
        INDENT,
    )
    return lines


def _skipped(result: AuditResult) -> list[str]:
    if not result.skipped:
        return []
    lines = ["", f"== Not audited ({len(result.skipped)} file(s) of other formats)"]
    for skipped in result.skipped:
        lines += _wrap(f"{skipped.path}: {skipped.reason}", INDENT)
    return lines


def _cell(key: str, reported: object, intended: object, verdict: str | None) -> str:
    shown_reported = format_value(key, reported)
    shown_intended = format_value(key, intended)
    if verdict == "mismatch":
        return f"{shown_reported}{MISMATCH_MARK} / {shown_intended}"
    if shown_reported == shown_intended:
        return shown_intended
    return f"{shown_reported} / {shown_intended}"


def regression_table(workbook: WorkbookResult) -> str:
    """One row per regression: each statistic once when reported and intended agree, else
    "reported / intended", then a verdict consistent with the columns and the findings."""
    headers = ["regression", "n"] + [label for label, _ in TABLE_STATS] + ["verdict"]
    shown = [key for _, key in TABLE_STATS]
    rows = []
    for regression in workbook.regressions:
        # A multiple regression gets one row per x column: keys slope[1], se_slope[1], ...
        suffixes = (
            [""]
            if regression.x_columns <= 1
            else [f"[{j}]" for j in range(1, regression.x_columns + 1)]
        )
        verdict = row_verdict(regression, shown).text
        for suffix in suffixes:
            name = regression.id if not suffix else f"{regression.id} x{suffix[1:-1]}"
            row = [name, str(regression.n)]
            for _, key in TABLE_STATS:
                row.append(_cell(key, *reported_and_intended(regression, key + suffix)))
            row.append(verdict)
            rows.append(row)
    align = ["left", "right"] + ["right"] * len(TABLE_STATS) + ["left"]
    return str(
        tabulate(rows, headers=headers, tablefmt="simple", disable_numparse=True, colalign=align)
    )


_SENTENCE_END = re.compile(r"(?<=[.!?])\s+(?=[A-Z])")


def shared_advice(findings: list[Finding]) -> dict[str, int]:
    """Sentences of advice that recur in the fixes of several findings, numbered in order of
    first appearance: printed once at the end instead of under every finding."""
    counts: dict[str, int] = {}
    for finding in findings:
        # The first sentence is the finding's own fix; what follows is general advice.
        for sentence in dict.fromkeys(_SENTENCE_END.split(finding.fix.strip())[1:]):
            counts[sentence] = counts.get(sentence, 0) + 1
    recurring = [s for s, n in counts.items() if n > 1 and len(s) >= ADVICE_MIN_LENGTH]
    return {sentence: number for number, sentence in enumerate(recurring, start=1)}


def brief_block(finding: Finding) -> list[str]:
    """A repeat of a minor or info finding already shown in full: its cells and first sentence."""
    title = f"[{finding.severity.upper()}] {finding.check}"
    if finding.cells:
        title += " " + ", ".join(finding.cells)
    first = _SENTENCE_END.split(finding.message.strip())[0]
    return [title, *_wrap(f"{first} (fix as above)", INDENT)]


def finding_block(finding: Finding, advice: dict[str, int] | None = None) -> list[str]:
    """``[MAJOR] check-id (kind) Sheet!E6`` then the message and the fix, indented."""
    title = f"[{finding.severity.upper()}] {finding.check}"
    if finding.kind:
        title += f" ({finding.kind})"
    if finding.cells:
        title += " " + ", ".join(finding.cells)
    lines = [title, *_wrap(finding.message, INDENT)]
    if finding.fix:
        first, *rest = _SENTENCE_END.split(finding.fix.strip())
        own = [first] + [s for s in rest if not advice or s not in advice]
        notes = sorted({advice[s] for s in rest if advice and s in advice})
        text = " ".join(own)
        if notes:
            text += " See advice " + ", ".join(f"A{n}" for n in notes) + " below."
        lines += _wrap(f"fix: {text}", INDENT)
    if finding.waived:
        lines += _wrap(f"waived: {finding.waived}", INDENT)
    return lines


def _workbook_section(
    workbook: WorkbookResult, shown_path: str, advice: dict[str, int], run_policy: str = ""
) -> list[str]:
    findings = sort_findings(workbook.all_findings())
    counts = ", ".join(
        f"{n} {s}" for s in SEVERITIES if (n := sum(1 for f in findings if f.severity == s))
    )
    title = f"== {shown_path}: {workbook.status}"
    if workbook.status != "unreadable":
        title += f"; {len(workbook.regressions)} regression(s); findings: {counts or 'none'}"
    lines = [
        title,
        f"{INDENT}SHA-256 {workbook.sha256 or 'not computed (the file could not be read)'}",
    ]
    if workbook.status == "unreadable":
        reason = workbook.error or "no reason was recorded"
        lines += _wrap(f"{failure_words(workbook)}: {reason}", INDENT)
    elif workbook.error:
        lines += _wrap(f"note: {workbook.error}", INDENT)
    if not workbook.stored_values and workbook.status != "unreadable":
        lines += _wrap(NO_STORED_VALUES, INDENT)
    if workbook.regressions:
        lines += ["", *regression_table(workbook).splitlines()]
        lines += policy_lines(workbook, run_policy)
    elif workbook.status == "no-regressions":
        lines += _wrap("No regression was found in this workbook.", INDENT)
    if findings:
        lines.append("")
    seen: set[tuple[str, str, str | None]] = set()
    for finding in findings:
        family = (finding.severity, finding.check, finding.kind)
        if finding.severity in BRIEF_SEVERITIES and family in seen and not finding.waived:
            lines += brief_block(finding)  # the same minor finding again: where and what only
        else:
            lines += finding_block(finding, advice)
        seen.add(family)
    return lines


def render_text(result: AuditResult) -> str:
    lines = _header(result) + run_summary(result)
    lines += ["", *_legend()]
    lines += _skipped(result)
    advice = shared_advice(result.all_findings())
    shown = short_paths(result)
    for workbook in result.workbooks:
        lines += [
            "",
            *_workbook_section(
                workbook, shown.get(workbook.path, workbook.path), advice, result.policy
            ),
        ]
    if advice:
        lines += ["", "== Advice that applies to several findings"]
        for sentence, number in advice.items():
            lines += _wrap(f"A{number}. {sentence}", INDENT)
    lines += ["", *_wrap(CAUTION)]
    return "\n".join(line.rstrip() for line in lines) + "\n"


class TextReporter:
    """Writes summary.txt."""

    filename = "summary.txt"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(render_text(result).encode("utf-8"))
