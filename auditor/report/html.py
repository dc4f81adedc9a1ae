"""review.html: one self-contained page a reviewer opens in a browser (no network, no scripts).

Layout: the header (tool, policy, date, counts) and how to read the page; files not audited and
files that could not be read; then per workbook its SHA-256, its regressions (three values per
statistic, a verdict consistent with the row) and its findings with the review decision; per
regression three plots (auditor.report.html_plots). The caution closes the page. Only the result
model is read; styles are inline, plots are inline SVG.
"""

from __future__ import annotations

from html import escape
from typing import BinaryIO

from auditor.model import SEVERITIES, AuditResult, Finding, RegressionResult
from auditor.report.common import (
    CAUTION,
    MISSING,
    SEVERITY_MEANING,
    TABLE_STATS,
    format_value,
    short_paths,
    sort_findings,
    stat_label,
    stat_order,
    status_counts,
)
from auditor.report.evidence_words import evidence_words
from auditor.report.html_many import draw_plots
from auditor.report.verdicts import row_verdict

STYLE = """
body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;margin:2rem auto;max-width:1180px;
color:#1d232a;line-height:1.45;padding:0 1rem}
h1{font-size:1.6rem;margin-bottom:.2rem}h2{margin-top:2.4rem;border-bottom:2px solid #1f4e79;
padding-bottom:.2rem}h3{margin:1.6rem 0 .4rem}
table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}
th,td{border:1px solid #c9d1d9;padding:.25rem .5rem;text-align:left;vertical-align:top}
th{background:#eef2f6}td.num{text-align:right;font-variant-numeric:tabular-nums}
.mismatch{background:#f3dbe4;font-weight:600}.muted{color:#5c6670}.sha{font-family:monospace;
font-size:.85rem}.finding{border-left:5px solid #8a96a3;padding:.3rem .8rem;margin:.6rem 0;
background:#f8f9fb}.critical{border-color:#8e2c48}.major{border-color:#b5651d}
.minor{border-color:#c9a227}.info{border-color:#5b7fa6}.sev{font-weight:700;text-transform:uppercase}
.verdict-confirmed{color:#1e6b3c;font-weight:600}.verdict-mismatch{color:#8e2c48;font-weight:700}
.verdict-other{color:#7a4b0c;font-weight:600}svg{max-width:100%;height:auto}
.caution{margin-top:2.5rem;padding:.8rem;background:#fff6e0;border:1px solid #e0c27a}
"""


def _cell(key: str, value: object) -> str:
    return escape(format_value(key, value))


def _verdict_class(tone: str) -> str:
    if tone == "confirmed":
        return "verdict-confirmed"
    return "verdict-mismatch" if tone in ("mismatch", "critical") else "verdict-other"


def _header(result: AuditResult) -> list[str]:
    totals = result.totals()
    statuses = ", ".join(f"{count} {name}" for name, count in status_counts(result).items())
    severities = ", ".join(
        f"{totals['findings_by_severity'].get(name, 0)} {name}" for name in SEVERITIES
    )
    legend = "".join(
        f"<li><b>{name}</b>: {escape(meaning)}</li>" for name, meaning in SEVERITY_MEANING.items()
    )
    return [
        "<h1>Regression audit review</h1>",
        f'<p class="muted">regaudit {escape(result.version)} · policy '
        f"{escape(result.policy)} · {escape(result.generated or 'date not recorded')}</p>",
        f"<p>{totals['workbooks']} workbook(s): {statuses}; {totals['regressions']} "
        f"regression(s); findings: {severities}.</p>",
        "<details><summary>How to read this page</summary><p>Each statistic has three values: "
        "<b>reported</b> (what the author saw), <b>as written</b> (what the cell's formula "
        "computes over the ranges it references) and <b>intended</b> (regaudit's own fit over "
        "the whole data table). A reported value that disagrees is shaded. The verdict of a "
        "regression covers every statistic and its findings.</p>"
        f"<ul>{legend}</ul></details>",
    ]


def _not_audited(result: AuditResult) -> list[str]:
    rows = [(s.path, s.reason) for s in result.skipped]
    rows += [
        (w.path, w.error or "unreadable") for w in result.workbooks if w.status == "unreadable"
    ]
    if not rows:
        return []
    body = "".join(f"<tr><td>{escape(p)}</td><td>{escape(r)}</td></tr>" for p, r in rows)
    return [
        "<h2>Files not audited</h2>",
        f"<table><tr><th>file</th><th>why</th></tr>{body}</table>",
    ]


def _regression_rows(regressions: list[RegressionResult]) -> str:
    shown = [key for _, key in TABLE_STATS]
    head = "".join(f"<th>{escape(label)}</th>" for label, _ in TABLE_STATS)
    rows = []
    for regression in regressions:
        cells = []
        for _, key in TABLE_STATS:
            reported = regression.reported.get(key)
            intended = regression.intended.get(key)
            if reported is not None and reported.verdict == "mismatch":
                text = f"{_cell(key, reported.value)} / {_cell(key, intended)}"
                cells.append(f'<td class="num mismatch">{text}</td>')
            else:
                cells.append(f'<td class="num">{_cell(key, intended)}</td>')
        verdict = row_verdict(regression, shown)
        rows.append(
            f'<tr><td><a href="#{_anchor(regression)}">{escape(regression.id)}</a></td>'
            f'<td class="num">{regression.n}</td>{"".join(cells)}'
            f'<td class="{_verdict_class(verdict.tone)}">{escape(verdict.text)}</td></tr>'
        )
    return (
        f"<table><tr><th>regression</th><th>n</th>{head}<th>verdict</th></tr>"
        f"{''.join(rows)}</table>"
    )


def _finding(finding: Finding) -> str:
    where = f" · {escape(', '.join(finding.cells))}" if finding.cells else ""
    kind = f" ({escape(finding.kind)})" if finding.kind else ""
    parts = [
        f'<div class="finding {finding.severity}"><span class="sev">{finding.severity}</span> '
        f"{escape(finding.check)}{kind}{where}",
        f"<p>{escape(finding.message)}</p>",
    ]
    if finding.fix:
        parts.append(f"<p><b>Fix:</b> {escape(finding.fix)}</p>")
    evidence = evidence_words(finding.evidence)
    if evidence:
        parts.append(f'<p class="muted">Evidence: {escape(evidence)}</p>')
    decision = finding.decision or {}
    if decision.get("decision") == "waived":
        parts.append(
            f"<p><b>Decision: waived</b> by {escape(decision.get('name', ''))} on "
            f"{escape(decision.get('date', ''))}: {escape(decision.get('reason', ''))}</p>"
        )
    else:
        parts.append('<p class="muted">Decision: open</p>')
    return "".join(parts) + "</div>"


def _anchor(regression: RegressionResult) -> str:
    return "r-" + "".join(ch if ch.isalnum() else "-" for ch in regression.id)


def _three_values(regression: RegressionResult) -> str:
    rows = []
    for key in sorted(regression.reported, key=stat_order):
        value = regression.reported[key]
        marked = ' class="num mismatch"' if value.verdict == "mismatch" else ' class="num"'
        rows.append(
            f"<tr><td>{escape(stat_label(key))}</td><td>{escape(value.cell)}</td>"
            f"<td{marked}>{_cell(key, value.value)}</td>"
            f'<td class="num">{_cell(key, value.as_written)}</td>'
            f'<td class="num">{_cell(key, value.intended)}</td>'
            f"<td>{escape(value.verdict)}</td><td>{escape(value.tolerance)}</td></tr>"
        )
    if not rows:
        return f'<p class="muted">No reported statistic {MISSING} nothing to compare.</p>'
    return (
        "<table><tr><th>statistic</th><th>cell</th><th>reported</th><th>as written</th>"
        f"<th>intended</th><th>verdict</th><th>judged</th></tr>{''.join(rows)}</table>"
    )


def _regression_section(regression: RegressionResult, plot: str) -> list[str]:
    title = regression.id + (f": {regression.label}" if regression.label else "")
    return [
        f'<h3 id="{_anchor(regression)}">{escape(title)} <span class="muted">'
        f"({escape(regression.x_range)} → {escape(regression.y_range)}, n = {regression.n})"
        "</span></h3>",
        plot or '<p class="muted">No plot: several x columns, or too few points.</p>',
        _three_values(regression),
    ]


def render_html(result: AuditResult) -> str:
    shown = short_paths(result)
    body = _header(result) + _not_audited(result)
    shown_workbooks = [w for w in result.workbooks if w.status != "unreadable"]
    plots = iter(draw_plots([r for w in shown_workbooks for r in w.regressions]))
    for workbook in result.workbooks:
        if workbook.status == "unreadable":
            continue
        name = shown.get(workbook.path, workbook.path)
        body += [
            f"<h2>{escape(name)}</h2>",
            f'<p class="sha">SHA-256 {escape(workbook.sha256)}</p>',
        ]
        if workbook.regressions:
            body.append(_regression_rows(workbook.regressions))
        else:
            body.append('<p class="muted">No regression was found in this workbook.</p>')
        findings = sort_findings(workbook.all_findings())
        body += [_finding(f) for f in findings] or ['<p class="muted">No findings.</p>']
        for regression in workbook.regressions:
            body += _regression_section(regression, next(plots))
    body.append(f'<p class="caution">{escape(CAUTION)}</p>')
    return (
        '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
        # Nothing may be fetched: the page is the record, whole, offline.
        '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; '
        "style-src 'unsafe-inline'; img-src data:\">"
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>regaudit review</title><style>{STYLE}</style></head><body>"
        + "\n".join(body)
        + "</body></html>\n"
    )


class HtmlReporter:
    """Writes review.html."""

    filename = "review.html"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(render_html(result).encode("utf-8"))
