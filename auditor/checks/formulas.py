"""Formula checks: the statistics of one regression should all use the same x and y ranges."""

from __future__ import annotations

from auditor.checks.base import RegressionContext, check
from auditor.formula import Ref
from auditor.model import Finding, Severity


def _overlap(a: Ref, b: Ref) -> bool:
    return (
        a.sheet.lower() == b.sheet.lower()
        and a.r1 <= b.r2
        and b.r1 <= a.r2
        and a.c1 <= b.c2
        and b.c1 <= a.c2
    )


@check("ranges-disagree", "The statistics of one regression use different x or y ranges.")
def ranges_disagree(context: RegressionContext) -> list[Finding]:
    """Every SLOPE/INTERCEPT/STEYX/RSQ/LINEST call of a regression should name the same ranges.

    Failing: ``=SLOPE(B4:B15,A4:A15)`` beside ``=STEYX(B4:B13,A4:A13)`` (one range not extended),
    ``=SLOPE(A4:A13,B4:B13)`` (x and y swapped), or a block copied across whose STEYX still names
    the first block's columns (``$E$3:$E$12``).
    Passing: all calls name A4:A15 and B4:B15.
    """
    spec = context.spec
    mismatched = {v.cell for v in context.reported.values() if v.verdict == "mismatch"}
    findings = []
    for use in spec.uses:
        if use.x == spec.x and use.y == spec.y:
            continue
        symmetric = use.function in ("CORREL", "PEARSON", "RSQ")  # same value either way
        swapped = _overlap(use.x, spec.y) and _overlap(use.y, spec.x)
        if swapped and symmetric:
            continue
        if swapped:
            kind, what = "xy-swapped", "has x and y swapped"
        elif not (_overlap(use.x, spec.x) and _overlap(use.y, spec.y)):
            kind, what = "copied-block", "names the data of another block"
        else:
            kind, what = "range-mismatch", "uses other ranges"
        severity: Severity = "major" if use.cell.address in mismatched else "minor"
        findings.append(
            Finding(
                check="ranges-disagree",
                kind=kind,
                severity=severity,
                cells=[use.cell.address],
                message=(
                    f"{use.function} in {use.cell.address} {what}: y = {use.y.address}, "
                    f"x = {use.x.address}, while the regression uses y = {spec.y.address}, "
                    f"x = {spec.x.address}."
                ),
                evidence={"function": use.function, "y": use.y.address, "x": use.x.address},
                fix=f"Make {use.cell.address} use y = {spec.y.address} and x = {spec.x.address} "
                "(relative references, so the block copies correctly).",
            )
        )
    return findings
