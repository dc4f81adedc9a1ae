"""COVAR, COVARIANCE.P and COVARIANCE.S in the evaluator, against numpy.cov (outside reference).

The LibreOffice comparison of the same functions is in tests/test_evaluate_libreoffice.py.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xlsxwriter

from auditor.evaluation.evaluator import Evaluator
from auditor.read.open import read_workbook

X = [1.5, 2.0, 3.25, 4.0, 5.5, 6.0, 7.75, 8.0]
Y = [2.1, 2.9, 4.4, 4.8, 7.2, 7.1, 9.9, 10.3]


def _evaluator(tmp_path: Path, y_cells: list[object], formulas: dict[str, str]) -> Evaluator:
    path = tmp_path / "cov.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Bench")
    for i, (x, y) in enumerate(zip(X, y_cells, strict=True)):
        sheet.write_number(i, 0, x)
        if isinstance(y, str):
            sheet.write_string(i, 1, y)
        elif y is not None:
            sheet.write_number(i, 1, float(y))  # type: ignore[arg-type]
    for cell, formula in formulas.items():
        sheet.write_formula(cell, formula)
    book.close()
    return Evaluator(read_workbook(path))


def test_covariances_match_numpy(tmp_path: Path) -> None:
    formulas = {
        "D1": "=COVAR(B1:B8,A1:A8)",
        "D2": "=_xlfn.COVARIANCE.P(A1:A8,B1:B8)",
        "D3": "=_xlfn.COVARIANCE.S(B1:B8,A1:A8)",
    }
    evaluator = _evaluator(tmp_path, list(Y), formulas)
    population = float(np.cov(X, Y, bias=True)[0, 1])
    sample = float(np.cov(X, Y, ddof=1)[0, 1])
    assert evaluator.cell_value("Bench", 1, 4) == pytest.approx(population, rel=1e-12)
    assert evaluator.cell_value("Bench", 2, 4) == pytest.approx(population, rel=1e-12)
    assert evaluator.cell_value("Bench", 3, 4) == pytest.approx(sample, rel=1e-12)


def test_a_pair_with_text_or_a_blank_is_dropped(tmp_path: Path) -> None:
    y_cells: list[object] = list(Y)
    y_cells[2], y_cells[5] = "n/a", None
    evaluator = _evaluator(tmp_path, y_cells, {"D1": "=_xlfn.COVARIANCE.S(B1:B8,A1:A8)"})
    keep = [i for i in range(8) if i not in (2, 5)]
    expected = float(np.cov([X[i] for i in keep], [Y[i] for i in keep], ddof=1)[0, 1])
    assert evaluator.cell_value("Bench", 1, 4) == pytest.approx(expected, rel=1e-12)
