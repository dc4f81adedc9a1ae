"""What the workbook says around a regression (auditor.design.inputs), on the design fixtures.

Source: LibreOffice's recalculation — the fixture workbooks were recalculated and saved by
LibreOffice (fixtures/make_design_fixtures.py), so the x of every inverse prediction must equal
the value LibreOffice stored in its cell; the other inputs are what the fixture script typed.
"""

from __future__ import annotations

import functools
from pathlib import Path

import openpyxl
import pytest

from auditor.design.inputs import DesignInputReader, DesignInputs
from auditor.evaluation.evaluator import Evaluator
from auditor.locate.locator import Locator, locate
from auditor.read.open import read_workbook

WORKBOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


@functools.cache
def inputs_of(name: str) -> dict[str, DesignInputs]:
    workbook = read_workbook(WORKBOOKS / name)
    locator = Locator(workbook)
    reader = DesignInputReader(workbook, Evaluator(workbook), locator.parsed)
    return {spec.id: reader.read(spec) for spec in locate(workbook, None, locator)}


def test_inverse_predictions_read_back_through_the_curve() -> None:
    found = inputs_of("design_lab_curve_checks.xlsx")["Curve Q7/E4"]
    stored = openpyxl.load_workbook(WORKBOOKS / "design_lab_curve_checks.xlsx", data_only=True)
    expected = {f"Samples!C{r}": stored["Samples"][f"C{r}"].value for r in range(4, 8)}
    got = {p.cell: p.x for p in found.predictions if p.how == "(y − b0)/b1"}
    assert got.keys() == expected.keys()
    for cell, value in expected.items():
        assert got[cell] == pytest.approx(value, rel=1e-9), cell
    assert found.working_range == (2.0, 20.0) and found.working_range_cell == "Curve Q7!E14"


def test_forecast_and_trend_predictions() -> None:
    found = inputs_of("design_plant_trials.xlsx")["Forecast/E4"]
    got = sorted((p.cell, p.x, p.how) for p in found.predictions)
    assert got == [("Forecast!H5", 20.0, "FORECAST"), ("Forecast!H7", 26.0, "TREND")]


def test_stated_slope_that_matters_and_conclusion() -> None:
    found = inputs_of("design_plant_trials.xlsx")["Glue Summary/B4"]
    assert found.slope_that_matters == 0.25
    assert found.slope_that_matters_cell == "Glue Summary!B14"
    texts = [text for text, _ in found.texts]
    assert "Conclusion: glue temperature does not affect bond strength." in texts


def test_other_regressions_predictions_are_not_taken() -> None:
    # Curve Q6 sits in the same workbook as the Samples sheet, which reads through Q7 only.
    assert inputs_of("design_lab_curve_checks.xlsx")["Curve Q6/E4"].predictions == []


def test_fitted_values_inside_the_range_are_predictions_too() -> None:
    # functions_coverage.xlsx holds FORECAST and TREND at x inside the data (1.5-5.0).
    found = inputs_of("functions_coverage.xlsx")
    predictions = [p for inputs in found.values() for p in inputs.predictions]
    assert predictions and all(1.5 <= p.x <= 5.0 for p in predictions)
