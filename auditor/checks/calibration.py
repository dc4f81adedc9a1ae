"""Calibration checks: what a reviewer who signs off a calibration curve redoes by hand.

They run only under a policy that judges calibrations (one that sets ``standards_tolerance``:
``calibration``, or ``auto`` for a curve recognised by its words); under ``general`` they are off.
The arithmetic is in :mod:`auditor.design.calibration_review`; this module words the findings
(the residual-shape check is in :mod:`auditor.checks.calibration_shape`). They check arithmetic
and design against a policy, and defer to the laboratory's own procedures.
"""

from __future__ import annotations

import math

import numpy as np

from auditor.checks.base import check
from auditor.context import RegressionContext
from auditor.design.calibration import CalibrationInputs, CurveReview, judges_calibration
from auditor.design.calibration_review import review_curve
from auditor.grid import column_letter
from auditor.model import Finding


def _reviewed(context: RegressionContext) -> tuple[CalibrationInputs, CurveReview] | None:
    inputs = getattr(context, "calibration", None)
    if not isinstance(inputs, CalibrationInputs) or not judges_calibration(context.policy):
        return None
    review = review_curve(inputs, context.policy)
    return None if review is None else (inputs, review)


def _g(value: float, digits: int = 4) -> str:
    return f"{value:.{digits}g}"


def _row_cell(context: RegressionContext, row: int) -> str:
    return f"{context.spec.x.sheet}!{column_letter(context.spec.x.c1)}{row}"


@check(
    "standards-acceptance",
    "Back-calculated standards outside the policy's acceptance (±15 %, ±20 % at the lowest).",
    thresholds=(
        "standards_tolerance",
        "lowest_standard_tolerance",
        "standards_min_share",
        "standards_min_count",
    ),
)
def standards_acceptance(context: RegressionContext) -> list[Finding]:
    """Each standard read back through the curve, against its nominal concentration.

    Failing: 8 standards, 1–100 ng/mL, unweighted: the 1 ng/mL standard reads back at 1.31 ng/mL
    (+31 %, limit ±20 %) and the 2 ng/mL one at +18 % (limit ±15 %): 6 of 8 pass, the run passes
    only if at least 75 % and six do. Passing: every standard within 4 % of nominal.
    """
    reviewed = _reviewed(context)
    if reviewed is None or reviewed[1].standards is None:
        return []
    inputs, review = reviewed
    verdict = review.standards
    assert verdict is not None
    failing = [i for i in range(len(review.nominal)) if review.nominal[i] != 0]
    failing = [i for i in failing if not verdict.passing[i]]
    if not failing:
        return []
    listed = "; ".join(
        f"{_g(review.nominal[i])} reads back {_g(review.back[i])} "
        f"({review.deviations[i]:+.1f} %, limit ±{verdict.limits[i]:g} %)"
        for i in failing[:6]
    )
    cells = [_row_cell(context, inputs.rows[i]) for i in failing if i < len(inputs.rows)]
    accepted = "The run meets" if verdict.accepted else "The run fails"
    why = "; ".join(verdict.reasons) or (
        f"{verdict.passed} of {verdict.non_zero} pass (at least {verdict.needed_share:.0%} and "
        f"{verdict.needed_count} needed)"
    )
    return [
        Finding(
            "standards-acceptance",
            "major" if not verdict.accepted else "minor",
            f"Back-calculated standards outside the acceptance ({review.curve.how}): {listed}. "
            f"{accepted} the acceptance: {why}.",
            kind="standards-fail",
            cells=cells,
            evidence={
                "passed": verdict.passed,
                "non_zero_standards": verdict.non_zero,
                "accepted": verdict.accepted,
                "worst_deviation_percent": float(np.nanmax(np.abs(review.deviations))),
            },
            fix="Check the failing standards' preparation and integration; exclude a standard only "
            "as the laboratory's procedure allows, and refit.",
        )
    ]


@check(
    "read-back-reported",
    "A back-calculated concentration or % deviation the author shows differs from the curve's.",
    thresholds=("read_off_tolerance",),
)
def read_back_reported(context: RegressionContext) -> list[Finding]:
    """The author's back-calculated or deviation column, recomputed from the curve.

    Failing: a column "=(B5-INTERCEPT(B$4:B$11,A$4:A$11))/SLOPE(B$4:B$11,A$4:A$11)" whose
    coefficients miss the two standards added later: 118.2 shown, 120.9 from the curve (one
    finding for the column; the % deviations computed from it are the same mistake). Passing: the
    column agrees with (y − b0)/b1 of the curve to 1e-6 relative.
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    inputs, review = reviewed
    index = {row: i for i, row in enumerate(inputs.rows)}
    tolerance = context.policy.get("read_off_tolerance")
    wrong: dict[tuple[str, str], list[tuple[str, float, float, float]]] = {}
    wrong_rows: set[int] = set()
    for item in sorted(inputs.read_backs, key=lambda rb: rb.kind != "concentration"):
        i = index.get(item.row)
        if i is None or (item.kind != "concentration" and item.row in wrong_rows):
            continue  # a deviation computed from a wrong read-back is the same mistake
        nominal, back = float(review.nominal[i]), float(review.back[i])
        truth = _read_back_truth(item.kind, nominal, back)
        scale = max(abs(truth), abs(nominal) if item.kind == "concentration" else 1.0)
        if not math.isfinite(truth) or abs(item.reported - truth) <= tolerance * scale:
            continue
        column = item.cell.rstrip("0123456789")
        wrong.setdefault((column, item.kind), []).append((item.cell, nominal, item.reported, truth))
        if item.kind == "concentration":
            wrong_rows.add(item.row)
    findings = []
    for (_, kind), items in wrong.items():
        worst = max(items, key=lambda it: abs(it[2] - it[3]))
        findings.append(
            Finding(
                "read-back-reported",
                "major",
                f"{len(items)} {kind} value(s) shown for the standards differ from the curve's "
                f"(tolerance {tolerance:g} relative); the largest: the standard at "
                f"{_g(worst[1])} shows {_g(worst[2], 6)}, the curve gives {_g(worst[3], 6)}.",
                kind="read-back-wrong",
                cells=[it[0] for it in items],
                evidence={"reported": worst[2], "recomputed": worst[3], "nominal": worst[1]},
                fix="Point the formulas at the curve's own slope and intercept (over all its "
                "standards) and recalculate.",
            )
        )
    return findings


def _read_back_truth(kind: str, nominal: float, back: float) -> float:
    if kind == "concentration":
        return back
    if not nominal:
        return math.nan
    return {
        "deviation %": (back - nominal) / nominal * 100,
        "recovery %": back / nominal * 100,
        "deviation": (back - nominal) / nominal,
        "recovery": back / nominal,
    }[kind]


@check(
    "scatter-grows",
    "The scatter grows with concentration and the curve is unweighted; weighting would change "
    "the low end.",
    thresholds=("spread_alpha", "lowest_standard_tolerance"),
)
def scatter_grows(context: RegressionContext) -> list[Finding]:
    """Equal scatter over the range is an assumption of the unweighted line.

    Failing: triplicates whose SD is 0.02 at 1 ng/mL and 2.1 at 100 ng/mL (F = 11025, p < 0.001);
    the unweighted line reads the lowest standard back at +24 %, 1/x² at +1.5 %. Passing: the
    same curve fitted with 1/x² weights; or a curve whose replicate SDs are alike over the range.
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    _, review = reviewed
    test = review.spread
    alpha = context.policy.get("spread_alpha")
    if test is None or review.curve.weights is not None or test.p_value >= alpha:
        return []
    effects = "; ".join(
        f"{e.scheme}: lowest standard ({_g(e.lowest_level)}) {e.deviation_unweighted:+.1f} % "
        f"→ {e.deviation_weighted:+.1f} %, Σ|deviation| {e.sum_abs_unweighted:.1f} → "
        f"{e.sum_abs_weighted:.1f} %"
        for e in review.effects
    )
    lowest_limit = context.policy.get("lowest_standard_tolerance")
    rescued = any(
        abs(e.deviation_unweighted) > lowest_limit >= abs(e.deviation_weighted)
        for e in review.effects
    )
    ratio = f"; SD ratio top/bottom {test.ratio:.3g}" if math.isfinite(test.ratio) else ""
    return [
        Finding(
            "scatter-grows",
            "major" if rescued else "minor",
            f"The scatter grows with concentration ({test.method}: statistic {test.statistic:.4g}, "
            f"p = {test.p_value:.3g} < {alpha:g}{ratio}) and the curve is unweighted. "
            f"What weighting would change: {effects or 'no weighting could be tried'}.",
            kind="unequal-variance",
            cells=[context.spec.y.address],
            evidence={"statistic": test.statistic, "p_value": test.p_value, "ratio": test.ratio},
            fix="Choose the weighting the validation supports (the smallest Σ|deviation| is the "
            "usual yardstick) and refit; document the choice.",
        )
    ]


@check(
    "weighted-fit-recomputed",
    "A hand-built weighted fit (SUMPRODUCT with a weight column) differs from weighted least "
    "squares.",
    thresholds=("standards_tolerance",),
)
def weighted_fit_recomputed(context: RegressionContext) -> list[Finding]:
    """Weighted slopes and intercepts built by hand, recognised by their weight column.

    Failing: a cell labelled "Slope (1/x²)" holding 2.512 where weighted least squares with the
    column's 1/x² weights gives 2.497. Passing: the cell holds 2.497 (reported as recognised, info).
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    inputs, _ = reviewed
    findings = []
    for item in inputs.weighted:
        wrong = not item.matches
        findings.append(
            Finding(
                "weighted-fit-recomputed",
                "major" if wrong else "info",
                (
                    f"The weighted {item.key} ({item.scheme}) shown is {_g(item.reported, 7)}; "
                    f"weighted least squares with the column's weights gives "
                    f"{_g(item.intended, 7)}."
                    if wrong
                    else f"A weighted fit ({item.scheme}) built by hand: its {item.key} "
                    f"{_g(item.reported, 7)} is confirmed by weighted least squares."
                ),
                kind="weighted-fit-wrong" if wrong else None,
                cells=[item.cell],
                evidence={"reported": item.reported, "recomputed": item.intended},
                fix="Check the sums: Σw, Σwx, Σwy, Σwx², Σwxy over the same rows." if wrong else "",
            )
        )
    return findings
