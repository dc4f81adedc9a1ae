"""One calibration curve reviewed: the inputs read from the workbook, and the arithmetic redone.

:func:`read_calibration` runs in the pipeline (it reads the workbook, once per regression, and only
for a regression judged as a calibration); :func:`review_curve` is what the checks and the run
summary share: the back-calculated standards and their acceptance, the spread and what weighting
would change, the shape, the limits, the sample results and the tests against a target, all
computed once (the review is cached on the inputs).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from auditor.design.inputs import DesignInputs
from auditor.evaluation.evaluator import Evaluator
from auditor.extract import Extracted
from auditor.fit.calibration import (
    CoefficientTest,
    CurvatureResult,
    FloatArray,
    LimitBasis,
    LineFit,
    ReadOff,
    RunsResult,
    SpreadTest,
    StandardsVerdict,
    back_calculate,
    coefficient_test,
    curvature,
    detection_limits,
    deviation_percent,
    fit_line,
    judge_standards,
    read_off,
    residual_runs,
    residuals_of,
    spread_growth,
)
from auditor.fit.weights import WeightingEffect, scheme_weights, weighting_effect
from auditor.formula.syntax import Node
from auditor.locate.calibration_cells import CurveReader, ReadBack, SampleReading, TargetTest
from auditor.locate.calibration_labels import (
    Curve,
    LabelledFigure,
    WeightedCell,
    curve_of,
    labelled_figures,
    weighted_cells,
)
from auditor.locate.job import AUTO, JobDecision, decide, header_rows, read_signs
from auditor.locate.spec import RegressionSpec
from auditor.policy import Policy, load_policy
from auditor.read.workbook import Workbook

CALIBRATION_KEY = "standards_tolerance"  # a policy that sets it judges calibration curves


def judges_calibration(policy: Policy) -> bool:
    return policy.find(CALIBRATION_KEY) is not None


@dataclass
class CalibrationInputs:
    decision: JobDecision
    curve: Curve | None = None
    rows: list[int] = field(default_factory=list)  # the data row of each curve point
    read_backs: list[ReadBack] = field(default_factory=list)
    samples: list[SampleReading] = field(default_factory=list)
    target_tests: list[TargetTest] = field(default_factory=list)
    lods: list[LabelledFigure] = field(default_factory=list)
    loqs: list[LabelledFigure] = field(default_factory=list)
    blank_sd: LabelledFigure | None = None
    weighted: list[WeightedCell] = field(default_factory=list)
    cached: CurveReview | None = None
    error: str = ""
    curve_name: str = ""  # the y column's header, for the run summary


def read_calibration(
    workbook: Workbook,
    evaluator: Evaluator,
    spec: RegressionSpec,
    data: Extracted,
    parsed: Mapping[tuple[str, int, int], Node],
    texts: list[tuple[str, str]],
    decision: JobDecision,
) -> CalibrationInputs:
    inputs = CalibrationInputs(decision, curve_name=(header_rows(workbook, spec.y) or [""])[0])
    inputs.curve = curve_of(data, spec.intercept, spec.x_columns)
    inputs.rows = [p.row for p in data.points if p.used]
    if inputs.curve is None:
        return inputs
    reader = CurveReader(workbook, evaluator, spec, parsed)
    inputs.read_backs, inputs.samples = reader.readings()
    inputs.target_tests = reader.target_tests()
    inputs.lods, inputs.loqs, inputs.blank_sd = labelled_figures(reader, texts)
    inputs.weighted = weighted_cells(reader, data)
    _release(spec, inputs)
    return inputs


def _release(spec: RegressionSpec, inputs: CalibrationInputs) -> None:
    """Cells of a weighted fit or of a test against 1 belong to those: the calibration checks
    judge them, so they are not compared with the unweighted line's statistic of the same name
    (a weighted slope is not a wrong slope; t of slope = 1 is not a wrong t of slope = 0)."""
    claimed = {w.cell for w in inputs.weighted} | {t.cell for t in inputs.target_tests}
    for key in [k for k, s in spec.stats.items() if s.cell.address in claimed]:
        del spec.stats[key]


@dataclass(frozen=True)
class SampleCheck:
    reading: SampleReading
    found: ReadOff  # from the curve (intended)
    agrees: bool | None  # the author's value against the recomputed one (None: no value)


@dataclass(frozen=True)
class LimitCheck:
    figure: LabelledFigure
    kind: str  # "LOD" | "LOQ"
    reproduced_by: str | None  # the σ whose limit reproduces the figure
    candidates: list[tuple[str, float]]  # (σ name, limit) tried


@dataclass
class CurveReview:
    curve: Curve
    line: LineFit
    nominal: FloatArray
    back: FloatArray
    deviations: FloatArray
    standards: StandardsVerdict | None
    spread: SpreadTest | None
    effects: list[WeightingEffect]
    runs: RunsResult | None
    bend: CurvatureResult | None
    limits: list[LimitBasis]
    limit_checks: list[LimitCheck]
    samples: list[SampleCheck]
    intercept_zero: CoefficientTest
    slope_one: CoefficientTest
    calibrated_range: tuple[float, float]


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


@functools.cache
def builtin_policy(name: str) -> Policy:
    return load_policy(name)


def prepare(
    workbook: Workbook,
    evaluator: Evaluator,
    spec: RegressionSpec,
    data: Extracted,
    design: DesignInputs,
    parsed: Mapping[tuple[str, int, int], Node],
    requested: Policy,
) -> tuple[Policy, JobDecision, CalibrationInputs | None]:
    """The policy that judges one regression, why, and (for a calibration) what it reads."""
    reads_back = any(p.how == "(y − b0)/b1" for p in design.predictions)
    x_values = np.asarray(data.x, dtype=float)
    x_first = x_values[:, 0] if x_values.ndim == 2 and x_values.shape[1] else x_values
    signs = read_signs(
        workbook,
        spec.x,
        spec.y,
        x_first,
        [t for t, _ in design.texts[:40]] + [spec.label],
        reads_back,
    )
    decision = decide(requested.name, signs)
    policy = requested if requested.name != AUTO else builtin_policy(decision.policy)
    if not judges_calibration(policy):
        return policy, decision, None
    texts = design.texts
    return (
        policy,
        decision,
        read_calibration(workbook, evaluator, spec, data, parsed, texts, decision),
    )
