"""Sample results and read-backs are found by what their formulas compute, over generated variety:
seeded choices of how the coefficients are reached (statistic cells, SLOPE/INTERCEPT inline,
INDEX(LINEST)), of the formula's arrangement (dilution before or after, ROUND around it, AVERAGE
of replicate readings), and of the sheet the samples sit on. The answer key (response, m, dilution,
x0) is the generator's own, computed with numpy; the workbooks are built in memory (no stored
values: what the author sees is the evaluated formula)."""

from __future__ import annotations

import random

import numpy as np
import pytest

from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Ref, parse
from auditor.locate.calibration_cells import CurveReader
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.read.workbook import Cell, Sheet, Workbook


def _generated(seed: int) -> tuple[Workbook, RegressionSpec, dict[str, tuple[float, int, float]]]:
    rng = random.Random(seed)
    x = [0.0, 1, 2, 5, 10, 20, 50][: rng.randint(5, 7)]
    y = [0.02 + 0.31 * v + rng.gauss(0, 0.01) for v in x]
    sheets = {"Curve": Sheet("Curve")}
    samples_sheet = rng.choice(["Curve", "Samples"])
    sheets.setdefault(samples_sheet, Sheet(samples_sheet))

    def put(sheet: str, a1_row: int, col: int, value: object, formula: str | None = None) -> Cell:
        cell = Cell(sheet, a1_row, col, None if formula else value, formula)  # type: ignore[arg-type]
        sheets[sheet].cells[(a1_row, col)] = cell
        sheets[sheet].max_row = max(sheets[sheet].max_row, a1_row)
        sheets[sheet].max_col = max(sheets[sheet].max_col, col)
        return cell

    last = 3 + len(x)
    for i, (xv, yv) in enumerate(zip(x, y, strict=True)):
        put("Curve", 4 + i, 1, xv)
        put("Curve", 4 + i, 2, yv)
    ranges = f"Curve!$B$4:$B${last},Curve!$A$4:$A${last}"
    slope_cell = put("Curve", 2, 7, None, f"=SLOPE({ranges})")
    intercept_cell = put("Curve", 3, 7, None, f"=INTERCEPT({ranges})")
    style = rng.choice(["cells", "inline", "linest"])
    b1_text, b0_text = {
        "cells": ("Curve!$G$2", "Curve!$G$3"),
        "inline": (f"SLOPE({ranges})", f"INTERCEPT({ranges})"),
        "linest": (f"INDEX(LINEST({ranges}),1,1)", f"INDEX(LINEST({ranges}),1,2)"),
    }[style]
    b1, b0 = np.polyfit(np.array(x), np.array(y), 1)
    key: dict[str, tuple[float, int, float]] = {}
    for k in range(rng.randint(1, 4)):
        row = 30 + k
        readings = [rng.uniform(0.5, 12.0) for _ in range(rng.choice([1, 1, 2, 3]))]
        dilution = rng.choice([1.0, 2.0, 10.0])
        for j, value in enumerate(readings):
            put(samples_sheet, row, 2 + j, value)
        cells = (
            f"B{row}" if len(readings) == 1 else f"AVERAGE(B{row}:{'BCD'[len(readings) - 1]}{row})"
        )
        core = f"({cells}-{b0_text})/{b1_text}"
        shape = rng.choice(["plain", "after", "before", "round"])
        if dilution != 1.0 or shape in ("after", "before"):
            put(samples_sheet, row, 6, dilution)
            core = f"{core}*F{row}" if shape != "before" else f"F{row}*{core}"
        elif shape == "round":
            core = f"ROUND({core},6)"
        put(samples_sheet, row, 8, None, "=" + core)
        response = float(np.mean(readings))
        key[f"{samples_sheet}!H{row}"] = (response, len(readings), dilution)
    book = Workbook("generated.xlsx", "", sheets, [], False)
    spec = RegressionSpec(
        "Curve/G2",
        "Curve",
        Ref("Curve", 4, 1, last, 1),
        Ref("Curve", 4, 2, last, 2),
        True,
        "formulas",
    )
    spec.stats["slope"] = StatCell("slope", slope_cell, "formula")
    spec.stats["intercept"] = StatCell("intercept", intercept_cell, "formula")
    assert b1 > 0 and b0 == b0  # the generator's curve rises
    return book, spec, key


@pytest.mark.parametrize("seed", range(60))
def test_generated_sample_formulas_are_found(seed: int) -> None:
    book, spec, key = _generated(seed)
    parsed = {
        (c.sheet, c.row, c.col): parse(c.formula or "", c.sheet, book) for c in book.formula_cells()
    }
    reader = CurveReader(book, Evaluator(book), spec, parsed)
    read_backs, samples = reader.readings()
    assert read_backs == []
    found = {s.cell: s for s in samples}
    assert set(found) == set(key)
    for cell, (response, m, dilution) in key.items():
        assert found[cell].response == pytest.approx(response, rel=1e-12)
        assert found[cell].replicates == m
        assert found[cell].dilution == dilution
