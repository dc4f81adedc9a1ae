"""summary.txt's calibration parts: the run summary (one row per curve, each acceptance verdict)
and, per workbook, the policy each regression was judged under and why.

Reads the result model only (``RegressionResult.calibration``, ``.policy``, ``.policy_reason``).
"""

from __future__ import annotations

import textwrap

from tabulate import tabulate

from auditor.model import AuditResult, WorkbookResult

# (key in RegressionResult.calibration, heading); the run summary's columns.
RUN_COLUMNS: tuple[tuple[str, str], ...] = (
    ("curve", "curve"),
    ("run", "run"),
    ("weighting", "weighting"),
    ("standards", "standards"),
    ("spread", "scatter"),
    ("shape", "shape"),
    ("limits", "LOD/LOQ"),
    ("samples", "samples"),
    ("target_tests", "target tests"),
    ("verdict", "curve verdict"),
)

RUN_NOTE = (
    "Each curve judged under the calibration policy: standards = back-calculated standards "
    "against the acceptance (passing/non-zero); scatter = growth of scatter with concentration; "
    "shape = residual runs and curvature; LOD/LOQ = the σ that reproduces the figure shown; "
    "samples = results read off, outside the calibrated range, differing from the curve. "
    "This checks arithmetic and design against a policy; the laboratory's procedures, local "
    "regulations and licensed practice decide on release."
)


def run_summary(result: AuditResult) -> list[str]:
    """The run summary across all workbooks; no lines when no curve was judged as a calibration."""
    rows = []
    for workbook in result.workbooks:
        for regression in workbook.regressions:
            if regression.calibration:
                row = [str(regression.calibration.get(key, "—")) for key, _ in RUN_COLUMNS]
                rows.append([_name(workbook.path), *row])
    if not rows:
        return []
    headers = ["workbook", *[heading for _, heading in RUN_COLUMNS]]
    table = tabulate(rows, headers=headers, tablefmt="simple", disable_numparse=True)
    note = textwrap.wrap(RUN_NOTE, width=100, break_on_hyphens=False)
    return ["", f"Calibration runs ({len(rows)} curves):", "", *table.splitlines(), "", *note]


def policy_lines(workbook: WorkbookResult, run_policy: str) -> list[str]:
    """Under ``auto`` (or where a regression's policy differs from the run's), which policy
    judged each regression and why."""
    shown = [
        r
        for r in workbook.regressions
        if r.policy
        and (
            run_policy == "auto"
            or (r.policy != "calibration" and "looks like a calibration" in r.policy_reason)
        )
    ]
    if not shown:
        return []
    lines = ["", "Policy per regression:"]
    for regression in shown:
        text = f"{regression.id}: {regression.policy} ({regression.policy_reason})"
        lines += textwrap.wrap(
            text,
            width=100,
            initial_indent="    ",
            subsequent_indent="      ",
            break_on_hyphens=False,
        )
    return lines


def _name(path: str) -> str:
    return path.replace("\\", "/").rsplit("/", 1)[-1]
