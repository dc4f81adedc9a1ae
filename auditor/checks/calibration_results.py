"""Calibration checks on what is read off the curve: limits, sample results, target tests.

Like :mod:`auditor.checks.calibration`, they run only under a policy that judges calibrations.
"""

from __future__ import annotations

from auditor.checks.base import check
from auditor.checks.calibration import _g, _reviewed
from auditor.context import RegressionContext
from auditor.fit.calibration import coefficient_test
from auditor.model import Finding


@check(
    "detection-limit-basis",
    "A reported LOD or LOQ recomputed from 3.3σ/S and 10σ/S: which σ reproduces it, if any.",
    thresholds=("lod_factor", "loq_factor"),
)
def detection_limit_basis(context: RegressionContext) -> list[Finding]:
    """σ may be the residual SD, the SE of the intercept or the blanks' SD (ICH Q2(R1)).

    Failing: "LOD 0.41 mg/L" where 3.3σ/S gives 0.66 (residual SD), 0.52 (SE of the intercept)
    and no blanks are shown: none reproduces it (minor: the laboratory may use another approach).
    Passing: "LOD 0.66 mg/L", reproduced by the residual SD (info naming it).
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    _, review = reviewed
    findings = []
    for item in review.limit_checks:
        tried = ", ".join(f"{_g(value)} ({name})" for name, value in item.candidates)
        if item.reproduced_by is not None:
            message = (
                f"The {item.kind} {_g(item.figure.reported)} is reproduced with σ = "
                f"{item.reproduced_by} (candidates: {tried})."
            )
            severity, kind = "info", None
        else:
            message = (
                f"The {item.kind} {_g(item.figure.reported)} is reproduced by none of "
                f"{tried}; the laboratory may use another approach (signal-to-noise, a separate "
                "blank series): confirm it against the procedure."
            )
            severity, kind = "minor", "limit-basis"
        findings.append(
            Finding(
                "detection-limit-basis",
                severity,  # type: ignore[arg-type]
                message,
                kind=kind,
                cells=[item.figure.cell],
                evidence={"reported": item.figure.reported, "sigma": item.reproduced_by or ""}
                | {name: value for name, value in item.candidates},
                fix="" if item.reproduced_by else "State which σ the limit uses.",
            )
        )
    return findings


@check(
    "sample-read-off",
    "A sample result computed as (y − b0)/b1 (× dilution) differs from the curve's; its "
    "standard uncertainty from the calibration.",
    thresholds=("read_off_tolerance",),
)
def sample_read_off(context: RegressionContext) -> list[Finding]:
    """Sample results read off the curve, recomputed, with s(x0) from the calibration.

    Failing: "=(D20-$F$3)/$F$2*10" shows 48.2 mg/L while the curve gives 52.6 (the dilution factor
    cell holds 10, the formula reads an old intercept). Passing: the value agrees; an info finding
    lists each sample's concentration and standard uncertainty
    s(x0) = (s/b1)·√(1/m + 1/n + (y0 − ȳ)²/(b1²·Sxx)), times the dilution factor.
    """
    reviewed = _reviewed(context)
    if reviewed is None or not reviewed[1].samples:
        return []
    _, review = reviewed
    findings = []
    for item in review.samples:
        if item.agrees is False and item.reading.reported is not None:
            findings.append(
                Finding(
                    "sample-read-off",
                    "major",
                    f"The sample result shown is {_g(item.reading.reported, 6)}; the curve "
                    f"gives {_g(item.found.concentration, 6)} from the response "
                    f"{_g(item.reading.response, 6)} (dilution × {item.reading.dilution:g}); "
                    f"the formula {item.reading.formula} reads coefficients other than the "
                    "curve's over all its standards.",
                    kind="read-off-wrong",
                    cells=[item.reading.cell],
                    evidence={
                        "reported": item.reading.reported,
                        "recomputed": item.found.concentration,
                        "standard_uncertainty": item.found.standard_uncertainty,
                    },
                    fix="Point the formula at the curve's slope and intercept cells.",
                )
            )
    listed = "; ".join(
        f"{s.reading.cell.split('!')[-1]} {_g(s.found.concentration)} ± "
        f"{_g(s.found.standard_uncertainty, 2)} (m = {s.reading.replicates})"
        for s in review.samples[:8]
    )
    more = f" and {len(review.samples) - 8} more" if len(review.samples) > 8 else ""
    findings.append(
        Finding(
            "sample-read-off",
            "info",
            f"{len(review.samples)} sample result(s) read off the curve, with their standard "
            f"uncertainty from the calibration: {listed}{more}. This checks arithmetic against "
            "the curve; release of results follows the laboratory's procedures.",
            cells=[s.reading.cell for s in review.samples],
            evidence={"samples": len(review.samples)},
        )
    )
    return findings


@check(
    "sample-outside-range",
    "A sample result lies outside the calibrated range (lowest to highest non-zero standard).",
    thresholds=("standards_tolerance",),
)
def sample_outside_range(context: RegressionContext) -> list[Finding]:
    """A result read off below the lowest standard is outside the calibrated range, even where
    a blank (x = 0) keeps it inside the data's x range. Results beyond all the data are named by
    prediction-outside-x-range (one finding per result).

    Failing: a response that reads 0.02 mg/L from a curve with a blank and standards 0.05–1 mg/L.
    Passing: a response reading exactly 1 mg/L (the top standard is inside the range).
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    _, review = reviewed
    low, high = review.calibrated_range
    x_min, x_max = float(review.nominal.min()), float(review.nominal.max())
    findings = []
    for item in review.samples:
        before = item.found.concentration / item.reading.dilution
        if item.found.inside or not x_min <= before <= x_max:
            continue  # beyond all the data: prediction-outside-x-range says so (one finding)
        side = "below the lowest" if before < low else "above the highest"
        findings.append(
            Finding(
                "sample-outside-range",
                "major",
                f"The sample read off at {_g(before)} (before dilution) lies {side} standard: "
                f"the calibrated range is {_g(low)}–{_g(high)}.",
                kind="extrapolation",
                cells=[item.reading.cell],
                evidence={"read_off": before, "range_low": low, "range_high": high},
                fix="Dilute (above) or concentrate (below) and re-measure inside the range, or "
                "report as below/above the limit as the procedure says.",
            )
        )
    return findings


@check(
    "target-test-recomputed",
    "A test the author shows of the slope against 1 or the intercept against 0, recomputed.",
    thresholds=("alpha", "standards_tolerance"),
)
def target_test_recomputed(context: RegressionContext) -> list[Finding]:
    """Recovery and method comparison test slope = 1 and intercept = 0.

    Failing: t = (b1 − 1)/SE(b1) shown as 2.61, p = 0.028 ("slope differs from 1"), while the data
    give t = 1.74, p = 0.11 (critical: the conclusion at 5 % changes). Passing: t and p agree.
    """
    reviewed = _reviewed(context)
    if reviewed is None:
        return []
    inputs, review = reviewed
    alpha = context.policy.alpha
    findings = []
    line = review.line
    for item in inputs.target_tests:
        value, se = (
            (line.slope, line.se_slope)
            if item.coefficient == "slope"
            else (line.intercept, line.se_intercept)
        )
        test = coefficient_test(value, se, line.df, item.target)
        truth = test.t if item.statistic == "t" else test.p_value
        if abs(item.reported - truth) <= 1e-6 * max(abs(truth), 1e-12):
            continue
        changes = False
        if item.statistic == "p":
            changes = (item.reported < alpha) != (test.p_value < alpha)
        findings.append(
            Finding(
                "target-test-recomputed",
                "critical" if changes else "major",
                f"The {item.statistic} of the test {item.coefficient} = {item.target:g} is shown "
                f"as {_g(item.reported)}; the data give {_g(truth)} (t = {test.t:.4g}, "
                f"df = {test.df}, p = {test.p_value:.3g})"
                + (f": the conclusion at {alpha:g} changes." if changes else "."),
                kind="target-test-wrong",
                cells=[item.cell],
                evidence={"reported": item.reported, "recomputed": truth, "df": test.df},
                fix="Compute t = (b − target)/SE(b) from the fit's own cells, p with df = n − 2.",
            )
        )
    return findings
