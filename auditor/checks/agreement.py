"""Agreement checks: reported against intended, and reported against as written."""

from __future__ import annotations

from auditor.checks.agreement_words import describe, significance_changes
from auditor.checks.base import check
from auditor.compare.conditioning import agree_conditioned
from auditor.compare.reported import relative_tolerance
from auditor.context import RegressionContext
from auditor.diagnose.engine import explain
from auditor.diagnose.fixes import corrected_formula
from auditor.locate.typed_spec import place_only_link, typed_stale
from auditor.model import STAT_KEYS, Finding, ReportedValue, Severity, stat_base
from auditor.wording import fmt_pair


@check(
    "stat-recompute",
    "A reported statistic differs from the independent recomputation.",
    thresholds=("alpha", "confidence", "stored_relative_tolerance"),
)
def stat_recompute(context: RegressionContext) -> list[Finding]:
    """Compare each reported value with the fit over the intended data table.

    Failing: ``E2 =SLOPE(B2:B11,A2:A11)`` shows 0.412 while the ten rows A2:B11 give 0.4507.
    Passing: a typed 0.451 for a slope of 0.45071 (agrees to the 3 decimals shown).

    Severity: critical when the slope's sign or its significance at the policy's alpha changes,
    major otherwise.
    """
    findings: list[Finding] = []
    causes: list[tuple[ReportedValue, str]] = []
    pasted = context.spec.pasted
    if pasted is not None and pasted.source.status == "stale":
        return []  # one finding for the whole table: table-stale
    if typed_stale(context.spec):
        return []  # one finding for the whole typed table: typed-stale
    for value in context.reported.values():
        if value.verdict != "mismatch":
            continue
        critical = significance_changes(context, value)
        if isinstance(value.value, str) and value.key.startswith("p_") and value.intended:
            critical = True  # a text claim about p that does not hold is a wrong conclusion
        severity: Severity = "critical" if critical else "major"
        consequence = ""
        if critical:
            consequence = (
                f" At alpha = {context.policy.alpha:g} this changes the conclusion"
                if not value.key.startswith("slope")
                else " The sign of the slope is reversed"
            ) + "."
        shown, recomputed = fmt_pair(value.value, value.intended)
        judged = (  # "the same to 9 significant digits", or an allowance with its reason
            f"they should be {value.tolerance}"
            if value.tolerance.startswith("the same")
            else f"the difference allowed is {value.tolerance}"
        )
        message = (
            f"The reported {describe(value.key)} is {shown}, but the "
            f"{context.data.n} points of {context.data.intended_y_range} give "
            f"{recomputed}; {judged}.{consequence}"
        )
        evidence: dict[str, object] = {
            "key": value.key,
            "reported": value.value,
            "as_written": value.as_written,
            "intended": value.intended,
            "tolerance": value.tolerance,
        }
        repair = corrected_formula(
            value.key,
            context.spec,
            context.data,
            value.cell.rpartition("!")[0],
            1.0 - context.policy.get("confidence"),
        )
        if repair is not None:
            evidence["fix_formula"] = repair
            fix = f"Enter {repair} in {value.cell}, so that it follows the data."
        else:
            fix = (
                f"Correct the formula in {value.cell} so that it reads the whole data table "
                f"({context.data.intended_y_range})."
            )
        kind = None
        involved: list[str] = []  # cells the cause names beside this one (the copied offsets)
        explanations = explain(value, context)
        if explanations:
            # The simplest mistake that reproduces the reported number names the cause.
            cause = explanations[0]
            kind, fix = cause.kind, cause.fix
            if repair is not None:
                fix = f"{fix.rstrip('.')}; in {value.cell}: {repair}"
            message += f" Cause: {cause.message.rstrip('. ')}."
            evidence["reproduced_by"] = cause.kind
            evidence["reproduced"] = cause.reproduced
            if isinstance(cause.evidence.get("read_by"), str):
                involved.append(str(cause.evidence["read_by"]))
            if len(explanations) > 1:
                evidence["also_reproduced_by"] = ", ".join(e.kind for e in explanations[1:4])
        findings.append(
            Finding(
                check="stat-recompute",
                kind=kind,
                severity=severity,
                cells=[value.cell, *involved],
                message=message,
                evidence=evidence,
                fix=fix,
            )
        )
        causes.append((value, explanations[0].message if explanations else ""))
    return _merge_by_cause(findings, causes, context)


def _merge_by_cause(
    findings: list[Finding],
    causes: list[tuple[ReportedValue, str]],
    context: RegressionContext,
) -> list[Finding]:
    """One finding per mistake: a short range or a stale slope makes SE, t and p wrong too, and a
    reviewer needs the cause once, with every cell it reaches and both numbers for each."""
    groups: dict[str, list[int]] = {}
    for index, finding in enumerate(findings):
        if finding.kind is not None:
            groups.setdefault(finding.kind, []).append(index)
    merged: list[Finding] = []
    done: set[int] = set()
    for index, finding in enumerate(findings):
        if index in done:
            continue
        members = groups.get(finding.kind or "", [index]) if finding.kind else [index]
        if len(members) == 1:
            merged.append(finding)
            continue
        done.update(members)
        order = sorted(members, key=lambda i: _stat_rank(causes[i][0].key))
        values = [causes[i][0] for i in order]
        critical = any(findings[i].severity == "critical" for i in members)
        lines = "; ".join(
            "{} in {}: reported {}, recomputed {}".format(
                describe(v.key), v.cell, *fmt_pair(v.value, v.intended)
            )
            for v in values
        )
        consequence = (
            f" At alpha = {context.policy.alpha:g} this changes the conclusion." if critical else ""
        )
        root = causes[order[0]][1]
        merged.append(
            Finding(
                check="stat-recompute",
                kind=finding.kind,
                severity="critical" if critical else "major",
                cells=[v.cell for v in values],
                message=(
                    f"{len(values)} reported statistics disagree with the recomputation from the "
                    f"{context.data.n} points of {context.data.intended_y_range}, and one mistake "
                    f"explains them all. Cause: {root.rstrip('. ')}. Values: {lines}.{consequence}"
                ),
                evidence={
                    "reproduced_by": finding.kind,
                    "values": [
                        {
                            "cell": v.cell,
                            "key": v.key,
                            "reported": v.value,
                            "intended": v.intended,
                            "tolerance": v.tolerance,
                            "fix_formula": findings[i].evidence.get("fix_formula"),
                        }
                        for i, v in zip(order, values, strict=True)
                    ],
                },
                fix=findings[order[0]].fix,
            )
        )
    return merged


def _stat_rank(key: str) -> int:
    base = stat_base(key).split("[")[0]
    return STAT_KEYS.index(base) if base in STAT_KEYS else len(STAT_KEYS)


@check(
    "stat-stale",
    "A stored value no longer matches what its own formula computes.",
    thresholds=("stored_relative_tolerance",),
)
def stat_stale(context: RegressionContext) -> list[Finding]:
    """A cell's cached value differs from its formula's result over the current cells.

    Failing: ``E5 =E2/E3`` stores 4.10 but E2/E3 is now 3.62, which the data confirm (the file
    was saved without recalculation, or the value was pasted over and the formula restored).
    Passing: the stored value equals the formula's result to 1e-9 relative; or the stored value
    matches the independent fit (one engine's rule, such as dropping a near-collinear LINEST
    column, is not the truth: a stored value that is right is never stale); or the formula's own
    result disagrees with the data too (then nothing shows that something changed, and
    stat-recompute reports the wrong value with its cause).
    """
    rel = context.policy.get("stored_relative_tolerance")
    intended: dict[str, float | int | None] | None = None  # made for the first value judged
    findings = []
    for value in context.reported.values():
        if value.source != "stored" or value.as_written is None or isinstance(value.value, str):
            continue
        if value.value is None or value.verdict == "confirmed":
            continue  # a stored value that matches the correct fit is never stale
        if intended is None:
            intended = context.fit.stats()
        allowed = relative_tolerance(value.key, rel, intended)
        judged = agree_conditioned(
            float(value.value), value.as_written, value.key, allowed, None, context.fit.conditioning
        )
        if judged.agrees is not False:
            continue  # equal within what two engines may differ by, or too ill-conditioned
        evidence = (
            agree_conditioned(
                value.as_written, value.intended, value.key, allowed, None, context.fit.conditioning
            )
            if value.intended is not None
            else None
        )
        if evidence is None or evidence.agrees is not True:
            continue  # no evidence that the data changed under a right formula
        wrong = value.verdict == "mismatch"
        stored, now = _stored_and_now(value)
        findings.append(
            Finding(
                check="stat-stale",
                kind="stale-value",
                severity="major" if wrong else "minor",
                cells=[value.cell],
                message=(
                    f"{value.cell} stores {stored} but its formula {value.formula} computes "
                    f"{now} from the cells as they are now, as the independent fit does: the "
                    "stored value is out of date."
                ),
                evidence={"stored": value.value, "as_written": value.as_written},
                fix="Recalculate the workbook (or re-enter the formula) and re-check the "
                "reported figures before signing.",
            )
        )
    return findings


def _stored_and_now(value: ReportedValue) -> tuple[str, str]:
    return fmt_pair(float(value.value) if value.value is not None else None, value.as_written)


@check("stat-unverifiable", "A reported statistic could not be checked, and why.")
def stat_unverifiable(context: RegressionContext) -> list[Finding]:
    """Say which values could not be judged, so a reviewer checks them by hand.

    Failing: ``E9 =MYSTAT(B2:B9)`` (a function the tool does not evaluate) or a claim "see
    notes" where a p-value belongs.
    Passing: every reported value is confirmed or flagged.
    """
    findings = []
    for value in context.reported.values():
        if value.verdict != "unverifiable" or place_only_link(context.spec):
            continue  # a typed table weakly linked to its data: typed-stale says why, once
        reason = value.note or value.tolerance or "no independent value"
        findings.append(
            Finding(
                check="stat-unverifiable",
                severity="info",
                cells=[value.cell],
                message=f"The {describe(value.key)} in {value.cell} could not be verified: "
                f"{reason}.",
                evidence={"key": value.key, "reported": value.value},
                fix="Check this value by hand, or state it as a number or a claim such as "
                "'p < 0.001'.",
            )
        )
    stored = context.data.taken_as_stored
    if stored:
        cells = [cell for cell, _ in stored]
        findings.append(
            Finding(
                check="stat-unverifiable",
                severity="info",
                cells=cells[:1] + cells[1:20],
                message=f"{len(cells)} data cell(s) ({', '.join(cells[:3])}"
                f"{'…' if len(cells) > 3 else ''}) could not be recomputed ({stored[0][1]}); "
                "their stored values were used as the data.",
                evidence={"cells_taken_as_stored": len(cells)},
                fix="Check these data cells by hand if their formulas matter.",
            )
        )
    return findings
