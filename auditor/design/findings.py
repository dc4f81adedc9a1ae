"""The findings of the spread checks: narrow spread, too few levels, lack of fit.

Built from the design metrics (auditor.design.metrics) and the claim (auditor.design.claims);
registered as
checks in auditor/checks/design.py, which holds their ids, summaries and examples.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from auditor.design.advice import detect_sentence, num, percent, span, trade_off, wider_designs
from auditor.design.claims import Claim
from auditor.design.metrics import DesignMetrics
from auditor.grid import column_letter
from auditor.model import Finding, Severity
from auditor.policy import Policy

if TYPE_CHECKING:
    from auditor.context import RegressionContext


def row_cells(context: RegressionContext, row: int | None) -> list[str]:
    if row is None:
        return []
    x, y = context.spec.x, context.spec.y
    if x.sheet == y.sheet and y.c1 == x.c1 + 1:
        return [f"{x.sheet}!{column_letter(x.c1)}{row}:{column_letter(y.c1)}{row}"]
    return [f"{x.sheet}!{column_letter(x.c1)}{row}", f"{y.sheet}!{column_letter(y.c1)}{row}"]


def claim_cells(claim: Claim) -> list[str]:
    return [claim.cell] if claim.cell else []


def x_of_row(context: RegressionContext, row: int | None) -> float | None:
    for point in context.data.points:
        if point.row == row and point.x and point.x[0] is not None:
            return point.x[0]
    return None


def leverage_flagged(metrics: DesignMetrics, policy_share: float | None) -> bool:
    """One point's leverage reaches the bound, or it carries at least the policy's share of Sxx."""
    leverage, bound, share = metrics.max_leverage, metrics.leverage_bound, metrics.max_sxx_share
    high = leverage is not None and bound is not None and leverage >= bound
    return high or (share is not None and policy_share is not None and share >= policy_share)


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


def spread_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
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
                cells=[context.data.intended_x_range] + claim_cells(claim),
                message=lead + detect_sentence(metrics, policy) + ". A non-significant slope "
                "from this design is no evidence of no effect." + lever,
                evidence=_spread_evidence(metrics),
                fix=_fix(designs, policy) + _state_it(where),
            )
        )
    bound = policy.find("max_ci_relative_half_width")
    half, slope = metrics.ci_half_width, metrics.slope
    if bound and half is not None and slope and half / abs(slope) > bound:
        findings.append(_imprecise(context, metrics, bound))
    return findings


def levels_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
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


def lack_of_fit_findings(
    context: RegressionContext, metrics: DesignMetrics, claim: Claim
) -> list[Finding]:
    policy, lack = context.policy, metrics.lack
    level = policy.find("lack_of_fit_alpha") or policy.alpha
    if lack is not None and lack.p < level:
        strong = lack.p < (policy.find("curvature_major_alpha") or level)
        return [
            Finding(
                check="line-lacks-fit",
                kind="lack-of-fit",
                severity="major" if strong else "minor",
                cells=[context.data.intended_y_range],
                message=(
                    f"The straight line does not describe the level means: lack-of-fit F = "
                    f"{num(lack.f)} on {lack.df_lack_of_fit} and {lack.df_pure_error} df, p = "
                    f"{num(lack.p)} (α = {level:g}); the replicates scatter by s = "
                    f"{num(lack.pure_error_sd)}, the line misses them by s = "
                    f"{num(metrics.residual_sd)} overall. SE, t, p and every prediction assume "
                    "the line is right."
                    + (
                        ""
                        if strong
                        else " The evidence is weak (p above 1 %): check the "
                        "residual plot before acting on it."
                    )
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
    if (
        lack is None
        and policy.find("require_linearity_evidence")
        and metrics.replicated_levels == 0
    ):
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


def _state_it(where: str) -> str:
    if not where.startswith("the policy's default"):
        return ""
    return (
        " That default is only a stand-in: state the slope that matters beside the "
        "result (a cell labelled e.g. 'Smallest relevant slope') or as slope_that_matters in "
        "the policy."
    )
