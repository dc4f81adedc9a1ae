"""Predictions from the line: a FORECAST or TREND value checked against the fit itself.

A cell holding ``=FORECAST(25, B2:B13, A2:A13)`` shows b0 + b1·25 of the line over its ranges.
When those ranges are the regression's own, the value must equal the recomputed line's
prediction (to 1e-9 relative, the engines' agreement; floor: the slope's size); when the call
fits another window of rows, its prediction comes from another line, and the reader is told
both numbers (a risk: minor).
"""

from __future__ import annotations

import math

from auditor.checks.base import check
from auditor.compare.precision import agree_stored
from auditor.context import RegressionContext
from auditor.model import Finding

CHECK = "prediction-off-the-line"


def _g(value: float) -> str:
    return f"{value:.6g}"


@check(
    CHECK,
    "A FORECAST or TREND value differs from the recomputed line's prediction.",
    thresholds=("stored_relative_tolerance",),
)
def prediction_off_the_line(context: RegressionContext) -> list[Finding]:
    """Check each bare FORECAST/TREND cell of the regression against b0 + b1·x of the fit.

    Failing: ``=FORECAST(20, B2:B13, A2:A13)`` stores 241.7 while the 12 rows give 236.2 at
    x = 20 (a stale or pasted value); ``=FORECAST(20, B2:B9, A2:A9)`` predicts from 8 of the 12
    rows (minor: another line). Passing: the stored prediction equals b0 + b1·20 of the fit.
    """
    fit, inputs = context.fit, context.design_inputs
    if inputs is None or fit.k != 1 or not fit.intercept or not math.isfinite(fit.sxx):
        return []
    own = (context.spec.y.address, context.spec.x.address)
    table = (context.data.intended_y_range, context.data.intended_x_range)
    slope = float(fit.slopes[0])
    rel = context.policy.get("stored_relative_tolerance")
    findings = []
    for prediction in inputs.predictions:
        if prediction.shown is None or prediction.reads is None:
            continue
        expected = fit.intercept_value + slope * prediction.x
        agreement = agree_stored(prediction.shown, expected, rel=rel, scale=abs(slope))
        if agreement.agrees is not False:
            continue
        same = prediction.reads in (own, table)
        y_read, x_read = prediction.reads
        if same:
            message = (
                f"{prediction.cell} ({prediction.how} at x = {_g(prediction.x)}) shows "
                f"{_g(prediction.shown)}, but the line fitted to the {fit.n} points of "
                f"{table[0]} gives {_g(expected)} there (tolerance: {agreement.tolerance}): "
                "the stored value is stale or was pasted."
            )
            fix = f"Recalculate {prediction.cell}; it should show {_g(expected)}."
        else:
            message = (
                f"{prediction.cell} ({prediction.how} at x = {_g(prediction.x)}) fits its own "
                f"line to {y_read} on {x_read} and shows {_g(prediction.shown)}; the "
                f"regression's line over the {fit.n} points of {table[0]} gives "
                f"{_g(expected)} there."
            )
            fix = f"Fit the prediction to the same rows: {y_read} → {table[0]}."
        findings.append(
            Finding(
                check=CHECK,
                kind="stale-value" if same else "range-mismatch",
                severity="major" if same else "minor",
                cells=[prediction.cell],
                message=message,
                evidence={
                    "x": prediction.x,
                    "shown": prediction.shown,
                    "line_gives": expected,
                    "tolerance": agreement.tolerance,
                    "reads": f"{y_read} on {x_read}",
                },
                fix=fix,
            )
        )
    return findings
