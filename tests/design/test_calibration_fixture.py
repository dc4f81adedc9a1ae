"""The calibration checks on the LibreOffice-recalculated bench workbook (fixtures/
make_calibration_fixtures.py), against outside truth: LibreOffice's stored values, statsmodels WLS
and hand formulas with their sources named."""

from __future__ import annotations

import functools
import json
import math
from pathlib import Path

import numpy as np
import openpyxl
import pytest
import statsmodels.api as sm

from auditor.cli.main import main
from auditor.evaluation.evaluator import Evaluator
from auditor.extract.entry import extract
from auditor.fit.calibration import fit_line
from auditor.locate.calibration_labels import curve_of
from auditor.locate.locator import locate
from auditor.model import RegressionResult, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook

BOOK = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks" / "calib_bench_runs.xlsx"


@functools.cache
def _audited(policy: str = "auto") -> WorkbookResult:
    return audit_workbook(BOOK, load_policy(policy))


def _regression(sheet: str, policy: str = "auto") -> RegressionResult:
    return next(r for r in _audited(policy).regressions if r.sheet == sheet)


def _columns(sheet: str, first: int, last: int) -> tuple[np.ndarray, np.ndarray]:
    """x and y as LibreOffice stored them (columns A and B)."""
    ws = openpyxl.load_workbook(BOOK, data_only=True)[sheet]
    x = np.array([ws[f"A{r}"].value for r in range(first, last + 1)], dtype=float)
    y = np.array([ws[f"B{r}"].value for r in range(first, last + 1)], dtype=float)
    return x, y


def test_auto_policy_per_regression() -> None:
    policies = {r.sheet: r.policy for r in _audited().regressions}
    assert policies == {
        "Nitrite 0312": "calibration",
        "Assay B run 7": "calibration",
        "Assay C run 2": "calibration",
        "Lead ICP 0415": "calibration",
        "Spike recovery": "calibration",
        "Scrap vs speed": "general",
    }
    assert _regression("Scrap vs speed").calibration == {}
    assert _regression("Nitrite 0312").policy_reason.startswith("a calibration curve: x header")


def test_an_explicit_policy_wins() -> None:
    regressions = _audited("general").regressions
    assert {r.policy for r in regressions} == {"general"}
    assert all(r.calibration == {} for r in regressions)
    nitrite = _regression("Nitrite 0312", "general")
    assert "looks like a calibration curve" in nitrite.policy_reason


def test_linest_over_scaled_columns_is_the_weighted_fit_of_statsmodels() -> None:
    workbook = read_workbook(BOOK)
    spec = next(s for s in locate(workbook) if s.sheet == "Assay C run 2")
    data = extract(workbook, Evaluator(workbook), spec)
    curve = curve_of(data, spec.intercept, spec.x_columns)
    assert curve is not None and curve.scheme == "1/x"
    x, y = _columns("Assay C run 2", 4, 17)
    assert curve.x == pytest.approx(x, rel=1e-12)
    line = fit_line(curve.x, curve.y, curve.weights)
    reference = sm.WLS(y, sm.add_constant(x), weights=1 / x).fit()  # statsmodels
    assert line.slope == pytest.approx(reference.params[1], rel=1e-10)
    assert line.intercept == pytest.approx(reference.params[0], rel=1e-9)
    assert line.se_slope == pytest.approx(reference.bse[1], rel=1e-9)
    assert _regression("Assay C run 2").calibration["weighting"] == "1/x"


def test_hand_built_weighted_fit_against_statsmodels_and_libreoffice() -> None:
    x, y = _columns("Assay B run 7", 4, 27)
    reference = sm.WLS(y, sm.add_constant(x), weights=1 / x**2).fit()  # statsmodels
    findings = {
        f.cells[0]: f
        for f in _regression("Assay B run 7").findings
        if f.check == "weighted-fit-recomputed"
    }
    slope = findings["Assay B run 7!G12"]
    assert slope.severity == "info"
    assert slope.evidence["recomputed"] == pytest.approx(reference.params[1], rel=1e-10)
    # G12 is LibreOffice's value of the SUMPRODUCT formula: it agrees with statsmodels too.
    assert slope.evidence["reported"] == pytest.approx(reference.params[1], rel=1e-9)
    intercept = findings["Assay B run 7!G13"]
    assert intercept.severity == "major"
    assert intercept.evidence["recomputed"] == pytest.approx(reference.params[0], rel=1e-9)
    # The planted mistake, by hand: unweighted means with the weighted slope.
    assert intercept.evidence["reported"] == pytest.approx(
        y.mean() - reference.params[1] * x.mean(), rel=1e-9
    )


def test_sample_results_and_uncertainty_by_hand() -> None:
    x, y = _columns("Nitrite 0312", 4, 19)
    b1, b0 = np.polyfit(x, y, 1)
    n, s = x.size, math.sqrt(float(np.sum((y - b0 - b1 * x) ** 2)) / (x.size - 2))
    sxx = float(np.sum((x - x.mean()) ** 2))
    ws = openpyxl.load_workbook(BOOK, data_only=True)["Nitrite 0312"]
    # W-103: three readings averaged (m = 3), dilution 2; LibreOffice's stored result D26.
    y0 = float(np.mean([ws["F28"].value, ws["G28"].value, ws["H28"].value]))
    x0 = (y0 - b0) / b1 * 2
    assert ws["D26"].value == pytest.approx(x0, rel=1e-9)
    # Miller & Miller, section 5.6 (from memory): s(x0) = s/b1·√(1/m + 1/n + (y0−ȳ)²/(b1²Sxx)).
    u = 2 * s / b1 * math.sqrt(1 / 3 + 1 / n + (y0 - y.mean()) ** 2 / (b1**2 * sxx))
    info = next(
        f
        for f in _regression("Nitrite 0312").findings
        if f.check == "sample-read-off" and f.severity == "info"
    )
    assert f"D26 {x0:.4g} ± {u:.2g} (m = 3)" in info.message
    assert not [
        f
        for f in _regression("Nitrite 0312").findings
        if f.severity == "major" and f.check == "sample-read-off"
    ]


def test_detection_limits_reproduce_libreoffice_by_hand() -> None:
    # ICH Q2(R1) (from memory): LOD = 3.3σ/S, LOQ = 10σ/S; G9 is LibreOffice's 3.3*STEYX/SLOPE.
    x, y = _columns("Nitrite 0312", 4, 19)
    b1, b0 = np.polyfit(x, y, 1)
    s = math.sqrt(float(np.sum((y - b0 - b1 * x) ** 2)) / (x.size - 2))
    ws = openpyxl.load_workbook(BOOK, data_only=True)["Nitrite 0312"]
    assert ws["G9"].value == pytest.approx(3.3 * s / b1, rel=1e-9)
    limits = [f for f in _regression("Nitrite 0312").findings if f.check == "detection-limit-basis"]
    assert {f.evidence["sigma"] for f in limits} == {"residual SD"}
    assert limits[0].evidence["residual SD"] == pytest.approx(3.3 * s / b1, rel=1e-9)


def test_target_test_against_scipy_by_hand() -> None:
    from scipy import stats

    x, y = _columns("Spike recovery", 4, 13)
    fit = sm.OLS(y, sm.add_constant(x)).fit()  # statsmodels: t of slope = 1
    t = (fit.params[1] - 1) / fit.bse[1]
    finding = next(
        f for f in _regression("Spike recovery").findings if f.check == "target-test-recomputed"
    )
    assert finding.evidence["recomputed"] == pytest.approx(2 * stats.t.sf(abs(t), 8), rel=1e-9)
    # No false alarm on the t cell: it is a test against 1, not the slope's t against 0.
    assert not [f for f in _regression("Spike recovery").findings if f.check == "stat-recompute"]


def test_run_summary_in_text_json_and_workbook(tmp_path: Path) -> None:
    code = main(["audit", str(BOOK), "--out", str(tmp_path), "--fail-on", "never"])
    assert code == 0
    text = (tmp_path / "summary.txt").read_text(encoding="utf-8")
    assert "policy: auto" in text
    assert "Calibration runs (5 curves):" in text
    nitrite = next(line for line in text.splitlines() if "Nitrite 0312" in line and "pass" in line)
    assert "pass 14/14" in nitrite  # 16 standards, 2 of them blanks
    assert "licensed practice" in text
    data = json.loads((tmp_path / "audit.json").read_text(encoding="utf-8"))
    rows = {r["sheet"]: r for r in data["workbooks"][0]["regressions"]}
    assert rows["Assay B run 7"]["calibration"]["spread"] == "fail"
    assert rows["Scrap vs speed"]["policy"] == "general"
    book = openpyxl.load_workbook(tmp_path / "audit.xlsx")
    assert "Curves" in book.sheetnames
    values = [[c.value for c in row] for row in book["Curves"].iter_rows(min_row=2, max_row=6)]
    assert [row[3] for row in values] == [
        "Nitrite 0312",
        "Assay B run 7",
        "Assay C run 2",
        "Lead ICP 0415",
        "Spike recovery",
    ]


def test_read_backs_deviations_samples_and_tests_are_found_by_what_they_compute() -> None:
    from auditor.design.calibration import CalibrationInputs, prepare
    from auditor.design.inputs import DesignInputReader
    from auditor.locate.locator import Locator

    workbook = read_workbook(BOOK)
    evaluator = Evaluator(workbook)
    locator = Locator(workbook, None)
    specs = {s.sheet: s for s in locate(workbook, None, locator)}
    reader = DesignInputReader(workbook, evaluator, locator.parsed)

    def prepared(sheet: str) -> CalibrationInputs:
        spec = specs[sheet]
        data = extract(workbook, evaluator, spec)
        policy, decision, inputs = prepare(
            workbook, evaluator, spec, data, reader.read(spec), reader.parsed, load_policy("auto")
        )
        assert policy.name == "calibration" and decision.is_calibration
        assert inputs is not None
        return inputs

    nitrite = prepared("Nitrite 0312")
    kinds = sorted({(rb.kind, rb.cell.split("!")[1][0]) for rb in nitrite.read_backs})
    assert kinds == [("concentration", "C"), ("deviation %", "D")]
    assert len([rb for rb in nitrite.read_backs if rb.kind == "deviation %"]) == 14
    samples = {s.cell: s for s in nitrite.samples}
    assert samples["Nitrite 0312!D26"].replicates == 3
    assert samples["Nitrite 0312!D25"].dilution == 5
    lead = prepared("Lead ICP 0415")
    assert {rb.kind for rb in lead.read_backs} == {"concentration", "recovery %"}
    spike = prepared("Spike recovery")
    tests = {(t.cell, t.statistic, t.target) for t in spike.target_tests}
    assert tests == {("Spike recovery!G9", "t", 1.0), ("Spike recovery!G10", "p", 1.0)}
