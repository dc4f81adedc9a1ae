"""What a check receives: one regression's context, or one workbook's.

Both are plain data built by the pipeline (:mod:`auditor.pipeline.audit`). The design metrics are
a step of their own: computed once per regression, the first time a check asks, and carried on
the context (no cache outside it).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from auditor.design.claims import Claim
from auditor.design.inputs import DesignInputs
from auditor.design.metrics import DesignMetrics, compute_design
from auditor.design.rows import UsedRows
from auditor.evaluation.evaluator import Evaluator
from auditor.extract.record import Extracted
from auditor.fit.ols import FitResult
from auditor.formula.syntax import Node
from auditor.locate.spec import RegressionSpec
from auditor.model import DataPoint, RegressionResult, ReportedValue
from auditor.policy import Policy
from auditor.read.workbook import Workbook


@dataclass(frozen=True)
class PointRows:
    """The row of each data point (its column in a table laid out in rows) and whether the
    intended fit uses it, as arrays in the order of the points: one walk over the points,
    shared by the checks that look for rows left out or taken in."""

    rows: NDArray[np.int64]
    used: NDArray[np.bool_]

    @classmethod
    def of(cls, points: Sequence[DataPoint]) -> PointRows:
        # Lists first: a list made by comprehension and then an array is quicker than fromiter
        # over attrgetter, the same numbers.
        rows = np.array([point.row for point in points], dtype=np.int64)
        used = np.array([point.used for point in points], dtype=np.bool_)
        return cls(rows, used)

    def used_rows(self) -> UsedRows:
        """The rows of the used points, in their order (what the design metrics name)."""
        return UsedRows(self.rows[self.used])


@dataclass
class RegressionContext:
    """Everything a check may look at for one regression (plain data, no files)."""

    spec: RegressionSpec
    data: Extracted
    fit: FitResult
    reported: dict[str, ReportedValue]
    policy: Policy
    stored_values: bool = True
    design_inputs: DesignInputs | None = None  # claim text, stated working range, predictions
    design: DesignMetrics | None = None  # set by design_metrics(), once
    calibration: Any = None  # CalibrationInputs (auditor.design.calibration) for a calibration
    rows: PointRows | None = None  # set by point_rows(), once
    claim: Claim | None = None  # what the regression is said to show, set by the design checks
    levels: Any = None  # count_levels(data.x) (auditor.design.lackfit), when the pipeline has it

    def design_metrics(self) -> DesignMetrics:
        """The design metrics of this regression, computed on first use and kept."""
        if self.design is None:
            rows = self.point_rows().used_rows()
            self.design = compute_design(
                self.data, self.fit, self.policy, self.design_inputs, rows, self.levels
            )
        return self.design

    def point_rows(self) -> PointRows:
        """The points' rows and use as arrays, made on first use and kept."""
        if self.rows is None:
            self.rows = PointRows.of(self.data.points)
        return self.rows


@dataclass
class WorkbookContext:
    """What a workbook-level check may look at: the cells (as data, never the file), the
    located regressions and their results."""

    stored_values: bool
    formula_count: int
    unparsed: list[tuple[str, str]] = field(default_factory=list)  # (cell, why)
    regressions: int = 0
    workbook: Workbook | None = None
    specs: list[RegressionSpec] = field(default_factory=list)  # in the order of ``results``
    results: list[RegressionResult] = field(default_factory=list)
    parsed: dict[tuple[str, int, int], Node] = field(default_factory=dict)  # formula ASTs by cell
    policy: Policy | None = None
    evaluator: Evaluator | None = None  # as-written values (equivalent spellings are evaluated)
    words: list[Any] | None = None  # what the words say of each regression, read once (axis_words)
    blocks: Any = None  # the statistics blocks and their sibling groups (checks.formula_blocks)
