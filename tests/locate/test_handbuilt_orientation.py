"""A hand-built slope with its arguments swapped among cells that say which range is x.

Invented scenario: a bakery logs oven temperature (°C) against loaf volume (mL). The slope is
built by hand as COVARIANCE.S/VAR.S, the intercept as ȳ − b·x̄, the SE from SUMXMY2 of the
residuals. Stored values are what a spreadsheet saves, computed here by numpy (outside
reference): the swapped slope is cov(x, y)/var(y), and the cells built on it use that value.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter

from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

POLICY = load_policy("general")
N = 11


def _data(seed: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = np.round(np.linspace(180.0, 240.0, N) + rng.normal(0, 1.0, N), 1)
    y = np.round(400.0 + 2.5 * x + rng.normal(0, 20.0, N), 1)
    return x, y


def _write(path: Path, x: np.ndarray, y: np.ndarray, swapped: bool, block: bool) -> None:
    """x in A2:A12, y in B2:B12; the slope in E2 (swapped: divided by VAR.S of y); with
    ``block`` the intercept, SE and df below it, built on E2."""
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Oven Log")
    sheet.write_row(0, 0, ["Oven (°C)", "Volume (mL)"])
    sheet.write_column(1, 0, [float(v) for v in x])
    sheet.write_column(1, 1, [float(v) for v in y])
    xs, ys = f"A2:A{N + 1}", f"B2:B{N + 1}"
    cov = float(np.cov(x, y, ddof=1)[0, 1])
    slope = cov / float(np.var(y, ddof=1) if swapped else np.var(x, ddof=1))
    over = ys if swapped else xs
    sheet.write("D2", "Slope")
    sheet.write_formula("E2", f"=_xlfn.COVARIANCE.S({xs},{ys})/_xlfn.VAR.S({over})", None, slope)
    if block:
        intercept = float(y.mean() - slope * x.mean())
        sse = float(((y - (intercept + slope * x)) ** 2).sum())
        se = math.sqrt(sse / (N - 2)) / math.sqrt(float(((x - x.mean()) ** 2).sum()))
        sheet.write("D3", "Intercept")
        sheet.write_formula("E3", f"=AVERAGE({ys})-E2*AVERAGE({xs})", None, intercept)
        sheet.write("D4", "SE of slope")
        sheet.write_formula(
            "E4", f"=SQRT(SUMXMY2({ys},E3+E2*{xs})/(COUNT({xs})-2))/SQRT(DEVSQ({xs}))", None, se
        )
        sheet.write("D5", "df")
        sheet.write_formula("E5", f"=COUNT({xs})-2", None, float(N - 2))
    book.close()


def _only(path: Path) -> RegressionResult:
    result = audit_workbook(path, POLICY)
    assert len(result.regressions) == 1
    return result.regressions[0]


@pytest.mark.parametrize("seed", range(4))
def test_a_swapped_slope_among_cells_that_say_otherwise_is_named(tmp_path: Path, seed: int) -> None:
    x, y = _data(seed)
    path = tmp_path / "swapped.xlsx"
    _write(path, x, y, swapped=True, block=True)
    regression = _only(path)
    assert (regression.x_range, regression.y_range) == ("Oven Log!A2:A12", "Oven Log!B2:B12")
    assert regression.intended["slope"] == pytest.approx(np.polyfit(x, y, 1)[0], rel=1e-9)
    kinds = {k for f in regression.findings for k in [f.kind, *f.evidence.get("kinds", [])]}
    assert "xy-swapped" in kinds


def test_a_clean_block_and_a_lone_slope_keep_their_direction(tmp_path: Path) -> None:
    x, y = _data(9)
    clean = tmp_path / "clean.xlsx"
    _write(clean, x, y, swapped=False, block=True)
    regression = _only(clean)
    assert regression.x_range == "Oven Log!A2:A12"
    assert [f for f in regression.findings if f.severity in ("major", "critical")] == []
    # a slope alone (a beta: COVARIANCE.S(a, b)/VAR.S(b)) has nothing to outvote it
    lone = tmp_path / "lone.xlsx"
    _write(lone, x, y, swapped=True, block=False)
    assert _only(lone).x_range == "Oven Log!B2:B12"
