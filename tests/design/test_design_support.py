"""Build a RegressionContext from plain arrays for the design tests (imported; holds no tests)."""

from __future__ import annotations

import numpy as np

from auditor.context import RegressionContext
from auditor.extract.record import Extracted
from auditor.fit.ols import fit_ols
from auditor.formula.syntax import Ref
from auditor.locate.locator import RegressionSpec
from auditor.model import DataPoint, ReportedValue
from auditor.policy import Policy, load_policy

FIRST_ROW = 4


def context(
    x: np.ndarray,
    y: np.ndarray,
    reported_p: float | str | None = None,
    policy: Policy | None = None,
    sheet: str = "Data",
) -> RegressionContext:
    """Data in A4:B…, the slope's p reported in E12 (when given)."""
    policy = policy or load_policy("general")
    last = FIRST_ROW + x.size - 1
    spec = RegressionSpec(
        id=f"{sheet}/E4",
        sheet=sheet,
        x=Ref(sheet, FIRST_ROW, 1, last, 1),
        y=Ref(sheet, FIRST_ROW, 2, last, 2),
        intercept=True,
        found_by="formulas",
    )
    points = [
        DataPoint(FIRST_ROW + i, [float(a)], float(b), True, True)
        for i, (a, b) in enumerate(zip(x, y, strict=True))
    ]
    data = Extracted(
        x=np.asarray(x, dtype=float).reshape(-1, 1),
        y=np.asarray(y, dtype=float),
        points=points,
        intended_x_range=spec.x.address,
        intended_y_range=spec.y.address,
        n_as_written=x.size,
    )
    fit = fit_ols(data.x, data.y, confidence=policy.get("confidence"))
    reported = {}
    if reported_p is not None:
        reported["p_slope"] = ReportedValue("p_slope", f"{sheet}!E12", reported_p, None)
    return RegressionContext(spec, data, fit, reported, policy)
