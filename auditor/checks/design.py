"""Design checks: is the x design good enough for what the regression is said to show?

Each judges the design metrics (auditor.design.metrics) against the claim (auditor.design.claims)
under the
policy; the findings are worded in auditor.design.findings and auditor.design.point_findings. Simple
regressions (one x column) only. The workbook's own words, stated bounds and predictions arrive as
``context.design_inputs`` (auditor.design.inputs) when the pipeline reads them; without them the
claim comes from the reported p and no prediction is judged.
"""

from __future__ import annotations

from auditor.checks.base import check
from auditor.context import RegressionContext
from auditor.design.claims import Claim, read_claim
from auditor.design.findings import lack_of_fit_findings, levels_findings, spread_findings
from auditor.design.inputs import DesignInputs
from auditor.design.metrics import DesignMetrics
from auditor.design.point_findings import (
    extrapolation_findings,
    fragile_findings,
    leverage_findings,
)
from auditor.model import Finding


def _inputs(context: RegressionContext) -> DesignInputs | None:
    found = getattr(context, "design_inputs", None)
    return found if isinstance(found, DesignInputs) else None


def _judged(context: RegressionContext) -> tuple[DesignMetrics, Claim] | None:
    """The metrics and the claim, or None when the fit has no slope to judge."""
    if context.fit.status != "ok" or context.spec.x_columns != 1:
        return None
    metrics = context.design_metrics()
    if not metrics.simple:
        return None
    if context.claim is None:  # read once; the six design checks each ask
        inputs = _inputs(context)
        texts = inputs.texts if inputs is not None else []
        context.claim = read_claim(context.reported, context.policy.alpha, texts)
    return metrics, context.claim


@check(
    "x-spread-too-narrow",
    "The x spread could not detect the slope that matters (or is too imprecise for the claim).",
    thresholds=(
        "alpha",
        "power",
        "slope_that_matters",
        "relevant_elasticity",
        "max_sxx_share",
        "max_ci_relative_half_width",
        "confidence",
        "min_levels",
    ),
)
def spread_too_narrow(context: RegressionContext) -> list[Finding]:
    """A "no effect" reading needs a design that could have detected the slope that matters.

    Failing: "Conclusion: humidity has no effect" from RH 44.1–46.6 % (Sxx 4.6): power 7 % to
    detect the slope that matters. Passing: the same claim from 12 weeks spanning 12–29 °C,
    where the power is 100 %; or any significant slope.
    """
    judged = _judged(context)
    return [] if judged is None else spread_findings(context, *judged)


@check(
    "x-levels-too-few",
    "Too few distinct x levels to show that the relation is a line.",
    thresholds=("min_levels", "recommended_levels", "require_linearity_evidence"),
)
def levels_too_few(context: RegressionContext) -> list[Finding]:
    """With two levels any line fits their means; curvature cannot be seen.

    Failing: 10 runs at 180 °C and 10 at 220 °C (2 levels; the policy asks for 3). Passing:
    5 levels under the general policy.
    """
    judged = _judged(context)
    return [] if judged is None else levels_findings(context, *judged)


@check(
    "one-point-carries-slope",
    "One point's leverage or share of Sxx sets the slope.",
    thresholds=("alpha", "max_sxx_share", "max_leverage", "leverage_multiple"),
)
def one_point_carries_slope(context: RegressionContext) -> list[Finding]:
    """A significant slope that rests on one far point is fragile.

    Failing: nine runs at 20–24 m/min and one at 40 m/min, which carries 86 % of Sxx; without it
    p = 0.41. Passing: ten evenly spaced runs (the end points carry 25 % each).
    """
    judged = _judged(context)
    return [] if judged is None else leverage_findings(context, *judged)


@check(
    "conclusion-hinges-on-one-row",
    "Leaving out one observation makes the slope lose its significance.",
    thresholds=("alpha", "max_sxx_share", "confidence"),
)
def conclusion_hinges_on_one_row(context: RegressionContext) -> list[Finding]:
    """Significance that one observation can take away is fragile.

    Failing: p = 0.031 with n = 10, and without row 9 alone p = 0.083. Passing: p = 0.0004,
    and no single row left out brings p above 0.05. Major when the workbook states the effect
    in words ("significantly increases"); minor when only the reported p says it.
    """
    judged = _judged(context)
    return [] if judged is None else fragile_findings(context, *judged)


@check(
    "prediction-outside-x-range",
    "A prediction or a stated working range goes beyond the x values of the data.",
    thresholds=("extrapolation_tolerance", "require_linearity_evidence"),
)
def prediction_outside_x_range(context: RegressionContext) -> list[Finding]:
    """The line is supported only over the x values it was fitted to.

    Failing: standards 2–16 mg/L and a sample read back as 18.4 mg/L by ``=(C5-$E$5)/$E$4``;
    or ``=FORECAST(30, y, x)`` from weeks 1–12. Passing: every prediction inside the range.
    """
    judged = _judged(context)
    return [] if judged is None else extrapolation_findings(context, *judged)


@check(
    "line-lacks-fit",
    "Replicates show that a straight line does not fit the level means.",
    thresholds=(
        "lack_of_fit_alpha",
        "alpha",
        "require_linearity_evidence",
        "curvature_major_alpha",
    ),
)
def line_lacks_fit(context: RegressionContext) -> list[Finding]:
    """The lack-of-fit F test compares the level means with the line, against pure error.

    Failing: triplicates at 5 levels of a response that flattens at the top: F = 31 on 3 and
    10 df, p < 0.001. Passing: duplicates at 6 levels lying on a line (p = 0.6). Between
    curvature_major_alpha (1 %) and lack_of_fit_alpha (5 %) the finding is minor: weak evidence.
    """
    judged = _judged(context)
    return [] if judged is None else lack_of_fit_findings(context, *judged)
