"""The fast path's total-or-mean test, done by numpy over runs of plain rows, against the per-cell
classification (the reference), on generated columns chosen to trip it: zeros and constants
(every row "equals the sum" or "the mean" above), running totals planted among the rows, text
labels, non-numbers, NaN and infinities, and tables longer than the windows numpy reads."""

from __future__ import annotations

import math
import random

import pytest
from test_extract import _outcome

from auditor.evaluation.evaluator import Evaluator
from auditor.extract.entry import extract
from auditor.formula.syntax import Ref
from auditor.locate.locator import RegressionSpec
from auditor.read.workbook import Cell, CellValue, Sheet, Workbook


def _book(ys: list[CellValue], labels: dict[int, str]) -> tuple[Workbook, RegressionSpec]:
    cells: dict[tuple[int, int], Cell] = {}
    last = len(ys) + 1
    for offset, y in enumerate(ys):
        row = offset + 2
        cells[(row, 2)] = Cell("Data", row, 2, float(offset % 17))
        if y is not None:
            cells[(row, 3)] = Cell("Data", row, 3, y)
        if row in labels:
            cells[(row, 1)] = Cell("Data", row, 1, labels[row])
    sheet = Sheet("Data", cells, max_row=last, max_col=3)
    workbook = Workbook("runs.xlsx", "0" * 64, {"Data": sheet}, [], stored_values=True)
    referenced = Ref("Data", 2, 2, last - 3, 2), Ref("Data", 2, 3, last - 3, 3)
    return workbook, RegressionSpec("Results/E2", "Data", *referenced, True, "formulas")


def _column(kind: str, rng: random.Random, size: int) -> list[CellValue]:
    if kind == "zeros":
        return [0.0] * size
    if kind == "constant":
        return [2.5] * size
    ys: list[CellValue] = [
        round(rng.uniform(-5.0, 50.0), rng.choice([0, 1, 3])) for _ in range(size)
    ]
    if kind == "planted":
        for _ in range(size // 50):  # a running total or mean written into the column
            at = rng.randrange(3, size)
            kept = [v for v in ys[:at] if isinstance(v, float)]
            ys[at] = math.fsum(kept) if rng.random() < 0.5 else sum(kept) / len(kept)
    if kind == "odd":
        for _ in range(size // 40):
            ys[rng.randrange(size)] = rng.choice(
                [math.nan, math.inf, -math.inf, "n/a", None, 1e308]
            )
    if kind == "repeats":
        ys = [rng.choice([0.0, 1.0, 1.0, 3.0]) for _ in range(size)]
    return ys


@pytest.mark.parametrize("kind", ["zeros", "constant", "random", "planted", "odd", "repeats"])
@pytest.mark.parametrize("size", [5, 300, 5000])
def test_runs_give_what_the_per_cell_classification_gives(kind: str, size: int) -> None:
    rng = random.Random(f"{kind}-{size}")
    ys = _column(kind, rng, size)
    labels = {
        rng.randrange(2, size + 2): rng.choice(["Total", "note", "Mean", "B7"])
        for _ in range(size // 100)
    }
    workbook, spec = _book(ys, labels)
    fast = extract(workbook, Evaluator(workbook), spec)
    reference = extract(workbook, Evaluator(workbook), spec, cell_by_cell=True)
    assert _outcome(fast) == _outcome(reference)
    assert len(fast.points) == size
