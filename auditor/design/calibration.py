"""One calibration curve: the policy that judges it, its inputs and the records of its review.

:func:`prepare` and :func:`read_calibration` run in the pipeline (they read the workbook, once per
regression, and only for a regression judged as a calibration); the arithmetic that fills a
:class:`CurveReview` is :func:`auditor.design.calibration_review.review_curve`.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from auditor.design.inputs import DesignInputs
from auditor.evaluation.evaluator import Evaluator
from auditor.extract.record import Extracted
from auditor.fit.calibration import (
    CoefficientTest,
    FloatArray,
    LimitBasis,
    LineFit,
    ReadOff,
    StandardsVerdict,
)
from auditor.fit.calibration_shape import CurvatureResult, RunsResult, SpreadTest
from auditor.fit.weights import WeightingEffect
from auditor.formula.syntax import Node
from auditor.locate.calibration_cells import CurveReader, ReadBack, SampleReading
from auditor.locate.calibration_labels import (
    Curve,
    LabelledFigure,
    WeightedCell,
    curve_of,
    labelled_figures,
    weighted_cells,
)
from auditor.locate.calibration_targets import TargetTest, target_tests
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
    inputs.target_tests = target_tests(reader)
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
    counted: tuple[np.ndarray, np.ndarray] | None = None,
) -> tuple[Policy, JobDecision, CalibrationInputs | None]:
    """The policy that judges one regression, why, and (for a calibration) what it reads;
    ``counted``: the distinct values of x's (only) column and their counts, when known."""
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
        counted,
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
