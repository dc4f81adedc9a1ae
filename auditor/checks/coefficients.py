"""Coefficient checks for several x columns: a label must name the column whose statistic the
cell holds. LINEST lists coefficients in reverse order of the x columns, a classic trap."""

from __future__ import annotations

import re

from auditor.checks.agreement_words import describe
from auditor.checks.base import check
from auditor.context import RegressionContext
from auditor.model import Finding, Severity, stat_base
from auditor.wording import fmt

_PER_COLUMN = re.compile(r"^(?P<stat>[a-z_]+)\[(?P<j>\d+)\]$")


def _stem(header: str) -> str:
    """'Analyte (mg/L)' -> 'analyte': the first word of three letters or more."""
    words = re.findall(r"[^\W\d_]{3,}", header.lower())
    return words[0] if words else ""


@check(
    "coefficient-label-mismatch",
    "A label names one x column while the cell holds another column's statistic.",
    thresholds=("alpha",),
)
def coefficient_label_mismatch(context: RegressionContext) -> list[Finding]:
    """With x columns B "Analyte" and C "Conductivity", LINEST's first column is Conductivity's.

    Failing: G9 labelled "t (analyte)" holds ``=INDEX(G3:I7,1,1)/INDEX(G3:I7,2,1)`` (the
    conductivity coefficient), or the LINEST block's columns are headed in x order.
    Passing: "t (analyte)" holds ``=INDEX(G3:I7,1,2)/INDEX(G3:I7,2,2)``.
    """
    spec = context.spec
    names = [_stem(h) for h in spec.x_headers]
    if spec.x_columns < 2 or len({n for n in names if n}) < 2:
        return []
    intended = context.fit.stats()
    findings = []
    for key, stat in spec.stats.items():
        match = _PER_COLUMN.match(stat_base(key))
        if match is None:
            continue
        held = int(match.group("j"))
        for text in (stat.label, stat.column_header):
            named = [i for i, name in enumerate(names, start=1) if name and name in text.lower()]
            if len(named) != 1 or named[0] == held:
                continue
            meant = named[0]
            findings.append(_finding(context, key, stat.cell.address, text, held, meant, intended))
            break
    return findings


def _finding(
    context: RegressionContext,
    key: str,
    cell: str,
    text: str,
    held: int,
    meant: int,
    intended: dict[str, float | int | None],
) -> Finding:
    spec = context.spec
    stat = _PER_COLUMN.match(stat_base(key)).group("stat")  # type: ignore[union-attr]
    alpha = context.policy.alpha
    p_held, p_meant = intended.get(f"p_slope[{held}]"), intended.get(f"p_slope[{meant}]")
    severity: Severity = "major"
    consequence = ""
    if (
        stat in ("t_slope", "p_slope", "slope", "se_slope")
        and isinstance(p_held, float)
        and isinstance(p_meant, float)
        and (p_held < alpha) != (p_meant < alpha)
    ):
        severity = "critical"
        consequence = (
            f" At alpha = {alpha:g} the two columns differ in significance (p = {p_held:.3g} "
            f"for {spec.x_headers[held - 1]!r}, {p_meant:.3g} for {spec.x_headers[meant - 1]!r}),"
            " so the conclusion drawn from the label is wrong."
        )
    k = spec.x_columns
    return Finding(
        check="coefficient-label-mismatch",
        kind="coefficient-order",
        severity=severity,
        cells=[cell],
        message=(
            f"{cell} is labelled {text!r}, which names x column {meant} "
            f"({spec.x_headers[meant - 1]!r}), but it holds the {describe(stat)} of x column "
            f"{held} ({spec.x_headers[held - 1]!r}): LINEST lists the coefficients in reverse "
            f"order of the x columns. The {describe(stat)} of x column {meant} is "
            f"{fmt(intended.get(f'{stat}[{meant}]'))}.{consequence}"
        ),
        evidence={"held_column": held, "named_column": meant, "label": text},
        fix=(
            f"Relabel the cell for {spec.x_headers[held - 1]!r}, or read column "
            f"{k - meant + 1} of the LINEST block (INDEX(…, row, {k - meant + 1})) for "
            f"{spec.x_headers[meant - 1]!r}."
        ),
    )
