"""The findings of the point checks: one point carries the slope, significance that one row
carries, predictions beyond the data.

Registered as checks in auditor/checks/design.py, which holds their ids, summaries and examples.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from auditor.design.advice import num, percent, span, trade_off
from auditor.design.claims import Claim
from auditor.design.findings import claim_cells, leverage_flagged, row_cells, x_of_row
from auditor.design.inputs import Prediction
from auditor.design.metrics import DesignMetrics
from auditor.model import Finding

if TYPE_CHECKING:
    from auditor.context import RegressionContext


def leverage_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
    policy = context.policy
    if claim.kind == "no-effect" or not leverage_flagged(metrics, policy.find("max_sxx_share")):
        return []  # for a "no effect" reading the spread check speaks (and names the point)
    row, drop = metrics.max_sxx_share_row, metrics.drop
    x_at = x_of_row(context, row)
    undefined = drop is not None and drop.undefined_row == row
    p_without, slope_without = metrics.top_share_p_without, metrics.top_share_slope_without
    alpha = policy.alpha
    significant = (metrics.p_slope or 1.0) < alpha
    crosses = p_without is not None and (p_without < alpha) != significant
    flips = slope_without is not None and slope_without * (metrics.slope or 0.0) < 0.0
    if undefined:
        without = "without it the other points share one x value and no slope can be fitted"
    elif p_without is not None:
        verdict = "significant" if p_without < alpha else "not significant"
        without = (
            f"without it the slope is {num(slope_without)} and p = {num(p_without)} "
            f"({verdict} at α = {alpha:g})"
        )
    else:
        without = "without it too few points remain to test the slope"
    return [
        Finding(
            check="one-point-carries-slope",
            kind="single-point-leverage",
            severity="major" if undefined or crosses or flips else "minor",
            cells=row_cells(context, row),
            message=(
                f"Row {row} (x = {num(x_at, 4)}) has leverage {num(metrics.max_leverage)} and "
                f"carries {percent(metrics.max_sxx_share)} of Sxx: the slope ({num(metrics.slope)}"
                f", p = {num(metrics.p_slope)}) rests on that one point; {without}."
            ),
            evidence={
                "row": row,
                "leverage": metrics.max_leverage,
                "leverage_bound": metrics.leverage_bound,
                "sxx_share": metrics.max_sxx_share,
                "p_without": p_without,
                "slope_without": slope_without,
            },
            fix=f"Add points between the others and x = {num(x_at, 4)} (or repeat that run) so "
            f"that no single run sets the slope, and check row {row} for a recording error. "
            + trade_off(policy),
        )
    ]


def fragile_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
    policy, drop = context.policy, metrics.drop
    significant = metrics.p_slope is not None and metrics.p_slope < policy.alpha
    if not significant or claim.kind == "no-effect" or drop is None or drop.crossing_row is None:
        return []
    if drop.crossing_row == metrics.max_sxx_share_row and leverage_flagged(
        metrics, policy.find("max_sxx_share")
    ):
        return []  # the far point is the reason: one-point-carries-slope reports it
    row = drop.crossing_row
    others = drop.crossing_rows - 1
    also = f" ({others} other row(s) do so too)" if others > 0 else ""
    return [
        Finding(
            check="conclusion-hinges-on-one-row",
            kind="fragile-significance",
            # Major only against an effect the author states in words: a p-value just under
            # alpha that one row can lift over it is borderline, not a claim the design fails.
            severity="major" if claim.kind == "effect" and claim.source == "text" else "minor",
            cells=_unique(row_cells(context, row) + _p_cells(context) + claim_cells(claim)),
            message=(
                f"The slope is significant (p = {num(metrics.p_slope)}), but leaving out row "
                f"{row} alone (x = {num(x_of_row(context, row), 4)}) gives p = "
                f"{num(drop.crossing_p)}{also}: the conclusion at α = {policy.alpha:g} rests on "
                f"one observation. The {percent(policy.get('confidence'))} CI of the slope is "
                f"{num(metrics.ci_low)} to {num(metrics.ci_high)}."
            ),
            evidence={
                "row": row,
                "p": metrics.p_slope,
                "p_without": drop.crossing_p,
                "rows_that_cross": drop.crossing_rows,
            },
            fix=f"Check row {row} for a recording error; report the CI rather than a yes/no, and "
            "collect more points before relying on the significance.",
        )
    ]


def extrapolation_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
    low, high = metrics.x_min or 0.0, metrics.x_max or 0.0
    findings = []
    outside = metrics.outside or []
    if outside:
        shown = ", ".join(f"{p.cell} at x = {num(p.x, 4)} ({p.how})" for p in outside[:5])
        more = f" and {len(outside) - 5} more" if len(outside) > 5 else ""
        far = max(outside, key=lambda p: max(low - p.x, p.x - high))
        findings.append(
            Finding(
                check="prediction-outside-x-range",
                kind="extrapolation",
                severity="major",
                cells=sorted({p.cell for p in outside}),
                message=(
                    f"{len(outside)} prediction(s) use the line outside the x range of its data "
                    f"({span(low, high)}): {shown}{more}. Beyond the data, curvature or a change "
                    "of slope cannot be ruled out, and the prediction's uncertainty grows with "
                    "the distance from the mean of x."
                ),
                evidence={"x_min": low, "x_max": high, "outside": len(outside), "far": far.x},
                fix=_extrapolation_fix(far, low, high),
            )
        )
    stated = metrics.working_range
    if stated is not None and (stated[0] < low or stated[1] > high):
        strict = bool(context.policy.find("require_linearity_evidence"))
        findings.append(
            Finding(
                check="prediction-outside-x-range",
                kind="extrapolation",
                severity="major" if strict else "minor",
                cells=[c for c in (metrics.working_range_cell, context.data.intended_x_range) if c],
                message=(
                    f"The stated working range {span(*stated)} reaches beyond the x values of "
                    f"the data ({span(low, high)}): results near its ends would be extrapolated."
                ),
                evidence={"working_low": stated[0], "working_high": stated[1]},
                fix=f"Place standards at both ends of the working range ({span(*stated)}), "
                "evenly spaced in between. " + trade_off(context.policy),
            )
        )
    return findings


def _extrapolation_fix(far: Prediction, low: float, high: float) -> str:
    if far.how.startswith("(y"):  # a reading back through a calibration: bring the sample in
        return (
            f"Bring the sample into the calibrated range {span(low, high)} (e.g. by dilution) "
            f"or add standards up to x = {num(far.x, 4)}; report no result outside the standards."
        )
    return (
        f"Collect data out to x = {num(far.x, 4)} before predicting there, or report the "
        f"prediction as outside the data ({span(low, high)}) with its widening interval."
    )


def _p_cells(context: RegressionContext) -> list[str]:
    """The cells reporting the slope's p-value: the significance that is fragile."""
    return [v.cell for k, v in sorted(context.reported.items()) if k.split("@")[0] == "p_slope"]


def _unique(cells: list[str]) -> list[str]:
    return list(dict.fromkeys(cells))
