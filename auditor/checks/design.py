"""Design checks: is the x design good enough for what the regression is said to show?

Each judges the design metrics (auditor.design) against the claim (auditor.claims) under the
policy. Simple regressions (one x column) only. The workbook's own words, stated bounds and
predictions arrive as ``context.design_inputs`` (auditor.design_inputs) when the pipeline reads
them; without them the claim comes from the reported p and no prediction is judged.
"""

from __future__ import annotations

from auditor.advice import detect_sentence, num, percent, span, trade_off, wider_designs
from auditor.checks.base import RegressionContext, check
from auditor.claims import Claim, read_claim
from auditor.design import DesignMetrics, cached_design
from auditor.design_inputs import DesignInputs
from auditor.model import Finding, Severity
from auditor.policy import Policy
from auditor.workbook import column_letter


def _inputs(context: RegressionContext) -> DesignInputs | None:
    found = getattr(context, "design_inputs", None)
    return found if isinstance(found, DesignInputs) else None


def _judged(context: RegressionContext) -> tuple[DesignMetrics, Claim] | None:
    """The metrics and the claim, or None when the fit has no slope to judge."""
    if context.fit.status != "ok" or context.spec.x_columns != 1:
        return None
    inputs = _inputs(context)
    metrics = cached_design(context.data, context.fit, context.policy, inputs)
    if not metrics.simple:
        return None
    texts = inputs.texts if inputs is not None else []
    return metrics, read_claim(context.reported, context.policy.alpha, texts)


def _row_cells(context: RegressionContext, row: int | None) -> list[str]:
    if row is None:
        return []
    x, y = context.spec.x, context.spec.y
    if x.sheet == y.sheet and y.c1 == x.c1 + 1:
        return [f"{x.sheet}!{column_letter(x.c1)}{row}:{column_letter(y.c1)}{row}"]
    return [f"{x.sheet}!{column_letter(x.c1)}{row}", f"{y.sheet}!{column_letter(y.c1)}{row}"]


def _claim_cells(claim: Claim) -> list[str]:
    return [claim.cell] if claim.cell else []


def _x_of_row(context: RegressionContext, row: int | None) -> float | None:
    for point in context.data.points:
        if point.row == row and point.x and point.x[0] is not None:
            return point.x[0]
    return None


def leverage_flagged(metrics: DesignMetrics, policy_share: float | None) -> bool:
    lever = metrics.max_leverage is not None and metrics.leverage_bound is not None
    high = lever and metrics.max_leverage >= metrics.leverage_bound  # type: ignore[operator]
    share = metrics.max_sxx_share is not None and policy_share is not None
    return high or (share and metrics.max_sxx_share >= policy_share)  # type: ignore[operator]


@check("x-spread-too-narrow", "The x spread could not detect the slope that matters (or is too "
       "imprecise for the claim).")
def spread_too_narrow(context: RegressionContext) -> list[Finding]:
    """A "no effect" reading needs a design that could have detected the slope that matters.

    Failing: "Conclusion: humidity has no effect" from RH 44.1–46.6 % (Sxx 4.6): power 7 % to
    detect the slope that matters. Passing: the same claim from 12 weeks spanning 12–29 °C,
    where the power is 100 %; or any significant slope.
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, claim = judged
    policy = context.policy
    findings = []
    not_found = metrics.p_slope is not None and metrics.p_slope >= policy.alpha
    low_power = metrics.power is not None and metrics.power < policy.get("power")
    if claim.kind == "no-effect" and not_found and low_power:
        severity: Severity = "major" if claim.source == "text" else "minor"
        where = metrics.slope_that_matters_source
        lead = (
            f"{_capital(claim.describe())}, but this design could not have detected the slope "
            f"that matters ({num(metrics.slope_that_matters)}, from {where}): "
        )
        lever = ""
        if leverage_flagged(metrics, policy.find("max_sxx_share")):
            lever = (
                f" One point (row {metrics.max_sxx_share_row}) carries "
                f"{percent(metrics.max_sxx_share)} of Sxx."
            )
        designs = wider_designs(metrics, policy)
        findings.append(
            Finding(
                check="x-spread-too-narrow",
                kind="narrow-spread",
                severity=severity,
                cells=[context.data.intended_x_range] + _claim_cells(claim),
                message=lead + detect_sentence(metrics, policy) + ". A non-significant slope "
                "from this design is no evidence of no effect." + lever,
                evidence=_spread_evidence(metrics),
                fix=_fix(designs, policy),
            )
        )
    bound = policy.find("max_ci_relative_half_width")
    half, slope = metrics.ci_half_width, metrics.slope
    if bound and half is not None and slope and half / abs(slope) > bound:
        findings.append(_imprecise(context, metrics, bound))
    return findings


def _capital(text: str) -> str:
    return text[:1].upper() + text[1:]


def _fix(designs: list[str], policy: Policy) -> str:
    lead = _capital("; ".join(designs)) + ". " if designs else ""
    return lead + trade_off(policy)


def _spread_evidence(metrics: DesignMetrics) -> dict[str, object]:
    return {
        "sxx": metrics.sxx,
        "sxx_needed": metrics.sxx_needed,
        "residual_sd": metrics.residual_sd,
        "slope_that_matters": metrics.slope_that_matters,
        "slope_that_matters_source": metrics.slope_that_matters_source,
        "power": metrics.power,
        "min_detectable_slope": metrics.min_detectable_slope,
        "n_even_needed": metrics.n_even_needed,
    }


def _imprecise(context: RegressionContext, metrics: DesignMetrics, bound: float) -> Finding:
    half, slope = metrics.ci_half_width or 0.0, metrics.slope or 0.0
    confidence = context.policy.get("confidence")
    needed = metrics.sxx * (half / (bound * abs(slope))) ** 2 if metrics.sxx else None
    return Finding(
        check="x-spread-too-narrow",
        kind="narrow-spread",
        severity="major",
        cells=[context.data.intended_x_range],
        message=(
            f"The {percent(confidence)} CI of the slope is {num(slope)} ± {num(half)} "
            f"(± {percent(half / abs(slope))}); the policy asks for ± {percent(bound)} or "
            f"better. With the present scatter (s = {num(metrics.residual_sd)}) that needs "
            f"Sxx ≥ {num(needed)}; today Sxx = {num(metrics.sxx)}."
        ),
        evidence={"ci_half_width": half, "relative": half / abs(slope), "bound": bound},
        fix="Spread x wider or add points (Sxx grows with n and with the square of the range). "
        + trade_off(context.policy),
    )


@check("x-levels-too-few", "Too few distinct x levels to show that the relation is a line.")
def levels_too_few(context: RegressionContext) -> list[Finding]:
    """With two levels any line fits their means; curvature cannot be seen.

    Failing: 10 runs at 180 °C and 10 at 220 °C (2 levels; the policy asks for 3). Passing:
    5 levels under the general policy.
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, _ = judged
    policy = context.policy
    minimum = int(policy.get("min_levels"))
    recommended = policy.find("recommended_levels")
    strict = bool(policy.find("require_linearity_evidence"))
    cells = [context.data.intended_x_range]
    where = f"x = {span(metrics.x_min or 0.0, metrics.x_max or 0.0)}"
    if metrics.levels < minimum:
        return [
            Finding(
                check="x-levels-too-few",
                kind="few-levels",
                severity="major" if strict else "minor",
                cells=cells,
                message=(
                    f"The {metrics.n} points sit at only {metrics.levels} distinct x levels "
                    f"({where}); the policy asks for at least {minimum}. With so few levels the "
                    "straight line cannot be told from a curve."
                ),
                evidence={"levels": metrics.levels, "min_levels": minimum, "n": metrics.n},
                fix=f"Measure at {minimum} or more levels spread over the range. "
                + trade_off(policy),
            )
        ]
    if recommended and metrics.levels < recommended:
        return [
            Finding(
                check="x-levels-too-few",
                kind="few-levels",
                severity="info",
                cells=cells,
                message=(
                    f"{metrics.levels} distinct x levels ({where}): enough for the policy's "
                    f"minimum of {minimum}, fewer than the {int(recommended)} it recommends."
                ),
                evidence={"levels": metrics.levels, "recommended_levels": int(recommended)},
                fix=f"Next time, use about {int(recommended)} evenly spaced levels.",
            )
        ]
    return []


@check("one-point-carries-slope", "One point's leverage or share of Sxx sets the slope.")
def one_point_carries_slope(context: RegressionContext) -> list[Finding]:
    """A significant slope that rests on one far point is fragile.

    Failing: nine runs at 20–24 m/min and one at 40 m/min, which carries 86 % of Sxx; without it
    p = 0.41. Passing: ten evenly spaced runs (the end points carry 25 % each).
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, claim = judged
    policy = context.policy
    if claim.kind == "no-effect" or not leverage_flagged(metrics, policy.find("max_sxx_share")):
        return []  # for a "no effect" reading the spread check speaks (and names the point)
    row, drop = metrics.max_sxx_share_row, metrics.drop
    x_at = _x_of_row(context, row)
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
            cells=_row_cells(context, row),
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


@check("conclusion-hinges-on-one-row", "Leaving out one observation makes the slope lose its "
       "significance.")
def conclusion_hinges_on_one_row(context: RegressionContext) -> list[Finding]:
    """Significance that one observation can take away is fragile.

    Failing: p = 0.031 with n = 10, and without row 9 alone p = 0.083. Passing: p = 0.0004,
    and no single row left out brings p above 0.05.
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, claim = judged
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
            severity="major" if claim.kind == "effect" else "minor",
            cells=_row_cells(context, row) + _claim_cells(claim),
            message=(
                f"The slope is significant (p = {num(metrics.p_slope)}), but leaving out row "
                f"{row} alone (x = {num(_x_of_row(context, row), 4)}) gives p = "
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


@check("prediction-outside-x-range", "A prediction or a stated working range goes beyond the "
       "x values of the data.")
def prediction_outside_x_range(context: RegressionContext) -> list[Finding]:
    """The line is supported only over the x values it was fitted to.

    Failing: standards 2–16 mg/L and a sample read back as 18.4 mg/L by ``=(C5-$E$5)/$E$4``;
    or ``=FORECAST(30, y, x)`` from weeks 1–12. Passing: every prediction inside the range.
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, _ = judged
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
                fix=f"Extend the design to cover x = {num(far.x, 4)} (or bring the sample into "
                f"{span(low, high)}, e.g. by dilution), and report no value outside the data.",
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


@check("line-lacks-fit", "Replicates show that a straight line does not fit the level means.")
def line_lacks_fit(context: RegressionContext) -> list[Finding]:
    """The lack-of-fit F test compares the level means with the line, against pure error.

    Failing: triplicates at 5 levels of a response that flattens at the top: F = 31 on 3 and
    10 df, p < 0.001. Passing: duplicates at 6 levels lying on a line (p = 0.6).
    """
    judged = _judged(context)
    if judged is None:
        return []
    metrics, _ = judged
    policy, lack = context.policy, metrics.lack
    level = policy.find("lack_of_fit_alpha") or policy.alpha
    if lack is not None and lack.p < level:
        return [
            Finding(
                check="line-lacks-fit",
                kind="lack-of-fit",
                severity="major",
                cells=[context.data.intended_y_range],
                message=(
                    f"The straight line does not describe the level means: lack-of-fit F = "
                    f"{num(lack.f)} on {lack.df_lack_of_fit} and {lack.df_pure_error} df, p = "
                    f"{num(lack.p)} (α = {level:g}); the replicates scatter by s = "
                    f"{num(lack.pure_error_sd)}, the line misses them by s = "
                    f"{num(metrics.residual_sd)} overall. SE, t, p and every prediction assume "
                    "the line is right."
                ),
                evidence={
                    "f": lack.f,
                    "p": lack.p,
                    "df_lack_of_fit": lack.df_lack_of_fit,
                    "df_pure_error": lack.df_pure_error,
                },
                fix="Plot the residuals by level; fit over the range where the response is "
                "linear, or use the curve the method allows.",
            )
        ]
    if lack is None and policy.find("require_linearity_evidence") and metrics.replicated_levels == 0:
        return [
            Finding(
                check="line-lacks-fit",
                kind="lack-of-fit",
                severity="minor",
                cells=[context.data.intended_y_range],
                message=(
                    f"No x level is replicated ({metrics.levels} levels, {metrics.n} points), so "
                    "lack of fit cannot be tested against pure error; the policy asks for "
                    "linearity to be demonstrated."
                ),
                evidence={"levels": metrics.levels, "replicated_levels": 0},
                fix="Replicate the standards (e.g. duplicates at every level) so that the "
                "lack-of-fit F test can be made.",
            )
        ]
    return []
