"""Checks on analysis tables pasted as values: stale tables, their residual output, and tables
whose data were not found."""

from __future__ import annotations

import math

import numpy as np

from auditor.checks.agreement_words import describe, significance_changes
from auditor.checks.base import check
from auditor.context import RegressionContext, WorkbookContext
from auditor.grid import column_letter
from auditor.locate.pasted_spec import PASTED_RELATIVE, origin
from auditor.model import Finding, Severity
from auditor.wording import fmt

MAX_ROWS_LISTED = 5


@check(
    "table-stale",
    "A pasted analysis table no longer follows the data it names.",
    thresholds=("alpha",),
)
def table_stale(context: RegressionContext) -> list[Finding]:
    """The data the table names (or still partly reproduces) now give other figures.

    Failing: a pasted table reads slope 1.84 for "Load" on "Stretch"; the columns headed
    "Load" and "Stretch" hold the table's 12 rows, but two readings were corrected since and the
    fit now gives 1.79 (major; critical when significance or the sign changes).
    Passing: the data reproduce every number of the table to 1e-7 relative.
    """
    found = origin(context.spec)
    if found is None or found.source.status != "stale":
        return []
    wrong = [v for v in context.reported.values() if v.verdict == "mismatch"]
    if not wrong:
        return []
    critical = any(significance_changes(context, v) for v in wrong)
    severity: Severity = "critical" if critical else "major"
    listed = "; ".join(
        f"{describe(v.key)} in {v.cell}: pasted {fmt(v.value)}, now {fmt(v.intended)}"
        for v in wrong[:6]
    )
    more = f" (and {len(wrong) - 6} more)" if len(wrong) > 6 else ""
    consequence = (
        f" At alpha = {context.policy.alpha:g} the conclusion changes." if critical else ""
    )
    return [
        Finding(
            check="table-stale",
            kind="stale-value",
            severity=severity,
            cells=[v.cell for v in wrong],
            message=(
                f"The pasted table is out of date: {found.source.evidence}. "
                f"{len(wrong)} of its numbers differ from the fit of "
                f"{context.data.intended_y_range} on {context.data.intended_x_range} "
                f"(tolerance {PASTED_RELATIVE:g} relative): {listed}{more}.{consequence}"
            ),
            evidence={
                "why_these_data": found.source.evidence,
                "differing": len(wrong),
                "x_range": context.data.intended_x_range,
                "y_range": context.data.intended_y_range,
            },
            fix="Run the regression again on the current data and paste the new output over "
            "the old table (or restore the data the table was computed from).",
        )
    ]


@check(
    "table-residuals-differ",
    "A pasted residual or probability output does not follow the fit of its data.",
)
def table_residuals_differ(context: RegressionContext) -> list[Finding]:
    """Each predicted value, residual and standard residual of the pasted residual output, and
    the sorted y of the probability output, against the fit of the data found for the table.

    Failing: the residual output lists 14.2 as the residual of observation 7 where the data give
    11.9 (a number edited after pasting).
    Passing: every row agrees to 1e-7 relative of the spread of y.
    """
    found = origin(context.spec)
    output = found.table.residual_output if found is not None else None
    fit = context.fit
    if output is None or found is None or found.source.status != "reproduced":
        return []
    n = len(output.predicted)
    if len(fit.fitted) != n or n != len(context.data.y):
        return []
    scale = math.sqrt(max(fit.ss_residual + fit.ss_regression, 0.0) / n) or 1.0
    allowed = PASTED_RELATIVE * (np.abs(fit.fitted) + scale)
    bad_predicted = np.abs(np.array(output.predicted) - fit.fitted) > allowed
    bad_residual = np.abs(np.array(output.residuals) - fit.residuals) > PASTED_RELATIVE * scale
    bad_rows = bad_predicted | bad_residual
    if output.standard is not None and n > 1:
        # The add-ins divide by the root of SSE / (n − 1), not by s (checked on real output).
        spread = math.sqrt(fit.ss_residual / (n - 1))
        if spread > 0:
            standard = fit.residuals / spread
            bad_rows |= np.abs(np.array(output.standard) - standard) > PASTED_RELATIVE * (
                np.abs(standard) + 1.0
            )
    if output.sorted_y is not None:
        expected = np.sort(context.data.y)
        bad_rows |= np.abs(np.array(output.sorted_y) - expected) > allowed
    bad = np.nonzero(bad_rows)[0]
    if len(bad) == 0:
        return []
    table = found.table
    rows = [output.first_row + int(i) for i in bad]
    sheet = table.sheet
    listed = ", ".join(
        f"observation {int(i) + 1}: pasted {fmt(output.predicted[i])} / "
        f"{fmt(output.residuals[i])}, fit {fmt(float(fit.fitted[i]))} / "
        f"{fmt(float(fit.residuals[i]))}"
        for i in bad[:MAX_ROWS_LISTED]
    )
    first_cells = [
        f"{sheet}!{_col(output.index_col + (2 if bad_residual[i] else 1))}{output.first_row + i}"
        for i in bad[:MAX_ROWS_LISTED].tolist()
    ]
    return [
        Finding(
            check="table-residuals-differ",
            severity="major",
            cells=first_cells,
            message=(
                f"{len(bad)} of the {n} rows of the pasted residual (or probability) output do "
                "not follow the fit that reproduces the table's coefficients (predicted / "
                f"residual): {listed}."
            ),
            evidence={"rows": rows[:50], "tolerance": f"{PASTED_RELATIVE:g} × spread of y"},
            fix="Paste the residual output again from the same run as the coefficients.",
        )
    ]


def _col(index: int) -> str:
    return column_letter(index)


@check(
    "table-source-missing",
    "A pasted analysis table whose data the workbook does not hold.",
    scope="workbook",
)
def table_source_missing(context: WorkbookContext) -> list[Finding]:
    """A table of consistent numbers that no columns or rows of the workbook reproduce.

    Failing: a pasted table (2 x, n = 30) whose data were deleted or moved to another file:
    listed, every number unverifiable, with what was searched (info, never an alarm).
    Passing: a column pair of the workbook reproduces the table's coefficients.
    """
    findings = []
    for spec in context.specs:
        found = origin(spec)
        if found is None or found.source.status != "none":
            continue
        table = found.table
        findings.append(
            Finding(
                check="table-source-missing",
                severity="info",
                cells=[table.anchor.address],
                message=(
                    f"The pasted table at {table.anchor.address} ({table.k} x, n = {table.n}) "
                    f"could not be checked: no source found ({found.source.searched}). Its "
                    "numbers agree with one another, but no data in the workbook reproduce them."
                ),
                evidence={"searched": found.source.searched, "n": table.n, "k": table.k},
                fix="Keep the data the table was computed from in the workbook (the same rows, "
                "as numbers), or note where they are, so the table can be reproduced.",
            )
        )
    return findings
