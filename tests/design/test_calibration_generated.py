"""The calibration checks over generated curves (seeded; workbooks built in memory, the pipeline's
own locate → extract → checks under ``--policy auto``). The answer key is the generator's choice of
what it planted: clean curves draw no major or critical calibration finding; proportional error is
named as growing scatter; a bend that dominates the noise is named as the residuals' shape."""

from __future__ import annotations

import numpy as np
import pytest

from auditor.design.calibration_summary import CURVE_CHECKS
from auditor.evaluation.evaluator import Evaluator
from auditor.locate.locator import locate
from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_regression
from auditor.policy import load_policy
from auditor.read.workbook import Cell, Sheet, Workbook

CALIBRATION_CHECKS = CURVE_CHECKS | {
    "detection-limit-basis",
    "sample-read-off",
    "sample-outside-range",
}


def _audited(x: np.ndarray, y: np.ndarray) -> RegressionResult:
    sheet = Sheet("Curve")

    def put(row: int, col: int, value: object, formula: str | None = None) -> None:
        sheet.cells[(row, col)] = Cell("Curve", row, col, value, formula)  # type: ignore[arg-type]

    put(2, 1, "Conc (mg/L)")
    put(2, 2, "Absorbance")
    for i, (xv, yv) in enumerate(zip(x, y, strict=True)):
        put(3 + i, 1, float(xv))
        put(3 + i, 2, float(yv))
    last = 2 + x.size
    put(2, 5, "Slope")
    put(2, 6, None, f"=SLOPE(B3:B{last},A3:A{last})")
    put(3, 5, "Intercept")
    put(3, 6, None, f"=INTERCEPT(B3:B{last},A3:A{last})")
    sheet.max_row, sheet.max_col = last, 6
    book = Workbook("generated.xlsx", "", {"Curve": sheet}, [], False)
    specs = locate(book)
    assert len(specs) == 1
    result = audit_regression(book, Evaluator(book), specs[0], load_policy("auto"))
    assert result.policy == "calibration", result.policy_reason
    return result


def _serious(result: RegressionResult) -> list[str]:
    return [
        f"{f.check}: {f.message}"
        for f in result.findings
        if f.check in CALIBRATION_CHECKS and f.severity in ("critical", "major")
    ]


@pytest.mark.parametrize("seed", range(40))
def test_clean_curves_draw_no_serious_calibration_finding(seed: int) -> None:
    rng = np.random.default_rng(1000 + seed)
    x = np.repeat([0.5, 1, 2, 4, 6, 8, 10], 2)
    y = 0.01 + 0.2 * x + rng.normal(0, 0.002, x.size)
    assert _serious(_audited(x, y)) == []


def test_proportional_error_is_named_as_growing_scatter() -> None:
    named = 0
    for seed in range(30):
        rng = np.random.default_rng(2000 + seed)
        x = np.repeat([1.0, 2, 5, 10, 20, 50, 100], 3)
        y = (0.01 + 0.05 * x) * (1 + rng.normal(0, 0.08, x.size))
        found = [f for f in _audited(x, y).findings if f.check == "scatter-grows"]
        named += bool(found)
    assert named >= 28  # the F test at 100/1 with a CV of 8 % (SD ratio ~100) hardly misses


def test_a_dominant_bend_is_named_by_the_residual_shape() -> None:
    named = 0
    for seed in range(30):
        rng = np.random.default_rng(3000 + seed)
        x = np.array([0.0, 5, 10, 20, 40, 60, 80, 100, 120, 150])
        y = 30 + 900 * x - 1.5 * x**2 + rng.normal(0, 80, x.size)
        shape = [f for f in _audited(x, y).findings if f.check == "residual-shape"]
        named += any(f.severity == "major" for f in shape)
    assert named == 30
