"""Calibration check of the residuals' shape: a bend or runs that a straight curve leaves."""

from __future__ import annotations

import math

from auditor.checks.base import check
from auditor.checks.calibration import _reviewed
from auditor.context import RegressionContext
from auditor.model import Finding


def _lack_of_fit_named(context: RegressionContext) -> bool:
    """Whether the lack-of-fit F test against pure error (replicated levels) rejects the line."""
    if context.fit.status != "ok" or context.spec.x_columns != 1:
        return False
    lack = context.design_metrics().lack
    alpha = context.policy.get("lack_of_fit_alpha")
    return lack is not None and math.isfinite(lack.p) and lack.p < alpha


@check(
    "residual-shape",
    "The residuals bend: a significant quadratic term, or too few runs of residual signs.",
    thresholds=(
        "shape_alpha",
        "spread_alpha",
        "curvature_sd_ratio",
        "lack_of_fit_alpha",
        "curvature_major_alpha",
    ),
)
def residual_shape(context: RegressionContext) -> list[Finding]:
    """A straight line over a curve leaves its residuals in long runs of one sign.

    Failing: detector saturation: residuals − + + + − over 10 levels (3 runs), quadratic term
    t = −233, residual SD 4776 for the line and 58 for the quadratic (major: the bend dominates
    the scatter; major only when the quadratic term's p is under curvature_major_alpha, 1 %).
    Passing: residual signs alternate at random and the quadratic term has p = 0.62.
    A bend that the lack-of-fit test against replicates already names is shown as info.
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    _, review = reviewed
    alpha = context.policy.get("shape_alpha")
    bend, runs = review.bend, review.runs
    bent = bend is not None and bend.p_value < alpha
    clustered = runs is not None and runs.p_value < alpha
    if not bent and not clustered:
        return []
    parts = []
    if bend is not None:
        parts.append(
            f"quadratic term {bend.quadratic:.4g} (t = {bend.t:.3g}, p = {bend.p_value:.3g}); "
            f"residual SD {bend.s_line:.4g} for the line, {bend.s_quadratic:.4g} for the "
            "quadratic"
        )
    if runs is not None:
        parts.append(
            f"{runs.runs} runs of residual signs over the levels where {runs.expected:.1f} are "
            f"expected (p = {runs.p_value:.3g})"
        )
    spread = review.spread
    uneven = spread is not None and spread.p_value < context.policy.get("spread_alpha")
    if uneven and review.curve.weights is None:
        parts.append("the scatter grows with concentration, so these unweighted tests are rough")
    # Major only when the bend dominates the scatter; a bend that the lack-of-fit test against
    # pure error already names (line-lacks-fit) is shown as info (one finding per mistake).
    dominant = (
        bend is not None
        and bend.s_line >= context.policy.get("curvature_sd_ratio") * bend.s_quadratic
    )
    strong = bend is not None and bend.p_value < context.policy.get("curvature_major_alpha")
    severity = "major" if bent and dominant and strong and not uneven else "minor"
    if _lack_of_fit_named(context):
        severity = "info"
        parts.append("the lack-of-fit test against the replicates says the same")
    return [
        Finding(
            "residual-shape",
            severity,  # type: ignore[arg-type]
            "The residuals do not scatter at random about the line: " + "; ".join(parts) + ".",
            kind="lack-of-fit",
            cells=[context.spec.y.address],
            evidence={
                "quadratic_p": bend.p_value if bend else None,
                "runs": runs.runs if runs else None,
                "runs_p": runs.p_value if runs else None,
            },
            fix="Narrow the working range to the linear part, or fit the curve the procedure "
            "allows; see the residual plot on the detail sheet.",
        )
    ]
