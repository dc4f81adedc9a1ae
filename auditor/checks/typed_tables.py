"""Checks on typed statistic tables: a table of figures its data no longer give."""

from __future__ import annotations

from auditor.checks.agreement_words import describe, significance_changes
from auditor.checks.base import check
from auditor.context import RegressionContext, WorkbookContext
from auditor.locate.typed_spec import typed_origin
from auditor.model import Finding, Severity
from auditor.wording import fmt

LISTED = 6


@check(
    "typed-stale",
    "A typed table of regression figures that its data no longer give.",
    thresholds=("alpha",),
)
def typed_stale(context: RegressionContext) -> list[Finding]:
    """The typed figures agree with one another (t = slope / SE, p from t and df) but the data
    they describe now give other figures: they were typed from an older version of the data.

    Failing: "Slope (NTU per L/s) 0.668, Intercept −3.73, SE 0.371, t 1.80, p 0.110, R² 0.288"
    beside the columns "Flow (L/s)" and "Turbidity (NTU)", whose ten rows now give 0.226; with
    the last turbidity reading at 31.1 instead of 10.2 they give every typed figure (major;
    critical when p crosses the policy's alpha or the slope changes sign).
    Passing: the columns beside the table give every typed figure at the digits shown.

    Severity: critical or major only when the link is evidence a reviewer accepts (one changed
    reading reproduces the table, or the headers share its words and the data lie beside it);
    a table linked by place alone, or by words to data on another sheet, is minor, its figures
    unverifiable against these data.
    """
    found = typed_origin(context.spec)
    if found is None or found.source.status != "stale":
        return []
    weak = not found.source.strong
    wrong = [
        v
        for v in context.reported.values()
        if v.verdict == "mismatch" or (weak and v.verdict == "unverifiable" and v.intended)
    ]
    if not wrong:
        return []
    source = found.source
    data = f"{context.data.n} points of {context.data.intended_y_range} on " + (
        context.data.intended_x_range
    )
    listed = "; ".join(
        f"{describe(v.key)} in {v.cell}: typed {fmt(v.value)}, recomputed {fmt(v.intended)}"
        f"{'' if v.key.startswith('p_') else _apart(v.value, v.intended)}, "
        f"allowed: {v.tolerance}"
        for v in wrong[:LISTED]
    )
    more = f" (and {len(wrong) - LISTED} more)" if len(wrong) > LISTED else ""
    changes = any(significance_changes(context, v) for v in wrong)
    severity: Severity = "minor"
    consequence = ""
    if source.strong:
        severity = "critical" if changes else "major"
        if changes:
            consequence = f" At alpha = {context.policy.alpha:g} the conclusion changes."
        opening = f"The typed figures at {found.table.anchor.address} are out of date: "
    else:
        opening = (
            f"The typed figures at {found.table.anchor.address} do not follow the data found for "
            f"them, and nothing but {source.tie} ties the table to these data, so the figures "
            "are unverifiable against them: "
        )
    evidence: dict[str, object] = {
        "why_these_data": source.evidence,
        "differing": len(wrong),
        "x_range": context.data.intended_x_range,
        "y_range": context.data.intended_y_range,
        "words_matched": source.words,
        "beside": source.beside,
        "link": source.link,
        "strong": source.strong,
        "relations": found.table.relations,
    }
    if source.refit is not None:
        evidence["changed_reading"] = {"now": source.refit.now, "then": source.refit.then}
    return [
        Finding(
            check="typed-stale",
            kind="stale-value",
            severity=severity,
            cells=[v.cell for v in wrong],
            message=(
                f"{opening}{source.evidence}. {len(wrong)} of them differ from the fit of the "
                f"{data}: {listed}{more}.{consequence}"
            ),
            evidence=evidence,
            fix="Recompute the figures from the current data (with formulas that read it, so "
            "they cannot fall behind again), or restore the data they were computed from.",
        )
    ]


def _apart(typed: object, recomputed: float | None) -> str:
    """How far a typed figure is from the recomputed one, relative to the latter."""
    if not isinstance(typed, (int, float)) or not recomputed:
        return ""
    return f" ({abs(float(typed) - recomputed) / abs(recomputed):.1%} apart)"


@check(
    "typed-source-missing",
    "A typed table of regression figures whose data the workbook does not hold.",
    scope="workbook",
)
def typed_source_missing(context: WorkbookContext) -> list[Finding]:
    """Figures that agree with one another (t = slope / SE, p from t and df) but that no data
    in the workbook give, beside which no data lie, and whose words no data headers share.

    Failing: a sheet "Archive" holding "Slope 0.2056, SE 0.06264, t 3.283, p 0.01114, R² 0.574"
    and no readings: listed, every figure unverifiable, with what was searched (info, never an
    alarm).
    Passing: the columns beside the table give its figures.
    """
    findings = []
    for spec in context.specs:
        found = typed_origin(spec)
        if found is None or found.source.status != "none":
            continue
        anchor = found.table.anchor
        findings.append(
            Finding(
                check="typed-source-missing",
                severity="info",
                cells=[anchor.address],
                message=(
                    f"The typed figures at {anchor.address} could not be checked: "
                    f"{found.source.evidence}. They agree with one another "
                    f"({'; '.join(found.table.relations)}), but no data in the workbook are "
                    "shown to be theirs."
                ),
                evidence={"searched": found.source.evidence, "relations": found.table.relations},
                fix="Keep the data the figures were computed from in the workbook, beside them or "
                "under headers that name the same quantities, so they can be recomputed.",
            )
        )
    return findings
