"""The arithmetic of a calibration review, redone once per curve and cached on its inputs."""

from __future__ import annotations

import math

import numpy as np

from auditor.design.calibration import CalibrationInputs, CurveReview, LimitCheck, SampleCheck
from auditor.fit.calibration import (
    LimitBasis,
    LineFit,
    back_calculate,
    coefficient_test,
    detection_limits,
    deviation_percent,
    fit_line,
    judge_standards,
    read_off,
    residuals_of,
)
from auditor.fit.calibration_shape import curvature, residual_runs, spread_growth
from auditor.fit.weights import scheme_weights, weighting_effect
from auditor.locate.calibration_cells import SampleReading
from auditor.locate.calibration_labels import Curve, LabelledFigure
from auditor.policy import Policy


def review_curve(inputs: CalibrationInputs, policy: Policy) -> CurveReview | None:
    """The review of one curve (None when it is not a straight-line calibration)."""
    if inputs.cached is not None:
        return inputs.cached
    curve = inputs.curve
    if curve is None or np.unique(curve.x).size < 3:
        return None
    try:
        review = _review(inputs, policy, curve)
    except (ValueError, ArithmeticError):
        return None  # a degenerate curve (slope 0, one level): the calibration checks stay silent
    inputs.cached = review
    return review


def _review(inputs: CalibrationInputs, policy: Policy, curve: Curve) -> CurveReview:
    line = fit_line(curve.x, curve.y, curve.weights)
    if line.slope == 0 or not math.isfinite(line.slope):
        raise ValueError("the curve has no slope to read concentrations through")
    back = back_calculate(curve.y, line)
    deviations = deviation_percent(curve.x, back)
    standards = None
    if np.count_nonzero(curve.x) >= 1:
        standards = judge_standards(
            curve.x,
            deviations,
            policy.get("standards_tolerance"),
            policy.get("lowest_standard_tolerance"),
            policy.get("standards_min_share"),
            int(policy.get("standards_min_count")),
        )
    residuals = residuals_of(curve.x, curve.y, line)
    spread = spread_growth(curve.x, curve.y, residuals)
    effects = [
        e
        for scheme in ("1/x", "1/x²")
        if curve.weights is None and (e := weighting_effect(curve.x, curve.y, scheme)) is not None
    ]
    non_zero = curve.x[curve.x != 0]
    low = float(non_zero.min()) if non_zero.size else float(curve.x.min())
    calibrated = (low, float(curve.x.max()))
    blank = inputs.blank_sd.reported if inputs.blank_sd is not None else None
    limits = detection_limits(line, blank, policy.get("lod_factor"), policy.get("loq_factor"))
    return CurveReview(
        curve,
        line,
        curve.x,
        back,
        deviations,
        standards,
        spread,
        effects,
        residual_runs(curve.x, residuals),
        curvature(curve.x, curve.y) if curve.weights is None else None,
        limits,
        _limit_checks(inputs, limits),
        [_sample(s, curve, line, calibrated, policy) for s in inputs.samples],
        coefficient_test(line.intercept, line.se_intercept, line.df, 0.0),
        coefficient_test(line.slope, line.se_slope, line.df, 1.0),
        calibrated,
    )


def _sample(
    reading: SampleReading,
    curve: Curve,
    line: LineFit,
    calibrated: tuple[float, float],
    policy: Policy,
) -> SampleCheck:
    weight = 1.0
    if curve.weights is not None:
        x0 = (reading.response - line.intercept) / line.slope
        weight = _weight_at(curve, x0, reading.response)
    found = read_off(
        reading.response, line, *calibrated, reading.replicates, reading.dilution, weight
    )
    agrees = None
    if reading.reported is not None:
        tolerance = policy.get("read_off_tolerance") * max(abs(found.concentration), 1e-300)
        agrees = abs(reading.reported - found.concentration) <= tolerance
    return SampleCheck(reading, found, agrees)


def _weight_at(curve: Curve, x0: float, y0: float) -> float:
    """The weight one reading at x0 would get under the curve's scheme (in the fit's scale); for
    1/s² (and wherever the scheme is undefined at x0), the weight of the nearest level."""
    assert curve.weights is not None
    nearest = int(np.argmin(np.abs(curve.x - x0)))
    fitted = scheme_weights(curve.scheme, curve.x, curve.y) if curve.scheme != "1/s²" else None
    at = scheme_weights(curve.scheme, [x0], [y0]) if curve.scheme != "1/s²" else None
    if fitted is None or at is None:
        return float(curve.weights[nearest])
    scale = float(curve.weights[nearest] / fitted[nearest])  # the fit's weights may be scaled
    return float(at[0]) * scale


def _limit_checks(inputs: CalibrationInputs, limits: list[LimitBasis]) -> list[LimitCheck]:
    checks = []
    for kind, figures in (("LOD", inputs.lods), ("LOQ", inputs.loqs)):
        for figure in figures:
            candidates = [(b.sigma_name, b.lod if kind == "LOD" else b.loq) for b in limits]
            reproduced = next((name for name, value in candidates if _same(figure, value)), None)
            checks.append(LimitCheck(figure, kind, reproduced, candidates))
    return checks


def _same(figure: LabelledFigure, value: float) -> bool:
    """A typed figure agrees at the digits it shows; a formula's to 1e-6 relative."""
    from auditor.compare.precision import agree_typed

    if figure.typed:
        return bool(agree_typed(figure.reported, value, figure.number_format).agrees)
    return math.isclose(figure.reported, value, rel_tol=1e-6)
