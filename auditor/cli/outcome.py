"""What a run did, in one line of counts that add up (the console's closing line)."""

from __future__ import annotations

from auditor.model import SEVERITIES, AuditResult


def outcome_line(result: AuditResult) -> str:
    """What happened, in counts that add up: "2 workbooks: 1 audited, 1 unreadable; ..."."""
    totals = result.totals()
    by_status = totals["workbooks_by_status"]
    words = {
        "audited": "audited",
        "no-regressions": "with no regression",
        "unreadable": "unreadable",
    }
    parts = [f"{by_status[s]} {word}" for s, word in words.items() if by_status.get(s)]
    count = totals["workbooks"]
    line = f"{count} workbook{'' if count == 1 else 's'}: {', '.join(parts) or 'none'}"
    if any(w.status != "unreadable" for w in result.workbooks):
        severities = ", ".join(f"{totals['findings_by_severity'][s]} {s}" for s in SEVERITIES)
        line += f"; {totals['regressions']} regression(s); findings: {severities}"
    if result.skipped:
        line += f"; {len(result.skipped)} file(s) of other formats not audited (listed above)"
    return line
