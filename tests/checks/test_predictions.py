"""FORECAST and TREND values checked against the recomputed line (check prediction-off-the-line).

Scenario (invented): the Tollvane Works spring rig. The stored values are set here as a saved
file would carry them: the slope and a correct FORECAST from numpy.polyfit (outside reference),
and one FORECAST whose stored value no longer matches (a stale cache); the LibreOffice-made case
is in tests/cases/prediction-off-the-line.toml.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xlsxwriter

from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

X = np.linspace(1.0, 23.0, 12)
Y = 6.0 + 9.4 * X + np.random.default_rng(4).normal(0, 2.0, 12)


@pytest.mark.parametrize("new_x", [5.5, 20.0, 31.0])
def test_stale_forecast_is_flagged_and_a_right_one_is_not(tmp_path: Path, new_x: float) -> None:
    slope, intercept = np.polyfit(X, Y, 1)  # outside reference: numpy least squares
    right = float(intercept + slope * new_x)
    path = tmp_path / "rig.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Rig D")
    for i in range(12):
        sheet.write_row(i + 1, 0, [float(X[i]), float(Y[i])])
    sheet.write_formula("D2", "=SLOPE(B2:B13,A2:A13)", None, float(slope))
    sheet.write_formula("E2", f"=FORECAST({new_x},B2:B13,A2:A13)", None, right)
    sheet.write_formula("F2", f"=FORECAST({new_x},B2:B13,A2:A13)", None, right * 1.01)
    book.close()
    (regression,) = audit_workbook(path, load_policy("general")).regressions
    found = [f for f in regression.findings if f.check == "prediction-off-the-line"]
    assert [f.cells for f in found] == [["Rig D!F2"]]
    assert found[0].severity == "major" and found[0].kind == "stale-value"
    assert found[0].evidence["line_gives"] == pytest.approx(right, rel=1e-12)
