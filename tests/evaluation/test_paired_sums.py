"""SLOPE, INTERCEPT, RSQ, STEYX and CORREL of one pair of ranges share the pair's sums, found
once: each gives, to the last bit, what it gives evaluated alone in a workbook of its own, on
generated columns (numbers, text, blanks and logicals that the pair functions skip)."""

from __future__ import annotations

import random

import pytest
from test_evaluate import book

from auditor.evaluation.evaluator import Evaluator
from auditor.evaluation.values import RangeValue
from auditor.formula.syntax import Ref

FUNCTIONS = ("SLOPE", "INTERCEPT", "RSQ", "STEYX", "CORREL")


def _cells(rng: random.Random, n: int) -> dict[str, object]:
    cells: dict[str, object] = {}
    for row in range(1, n + 1):
        x = rng.uniform(0, 40)
        cells[f"A{row}"] = x if rng.random() > 0.1 else rng.choice(["n/a", True, None])
        cells[f"B{row}"] = 3.1 * x - 2 + rng.gauss(0, 2) if rng.random() > 0.1 else "x"
    return {k: v for k, v in cells.items() if v is not None}


@pytest.mark.parametrize("seed", range(12))
def test_each_function_gives_what_it_gives_alone(seed: int) -> None:
    rng = random.Random(seed)
    n = rng.randrange(5, 80)
    cells = _cells(rng, n)
    together = {f"D{i}": f"={name}(B1:B{n},A1:A{n})" for i, name in enumerate(FUNCTIONS, 1)}
    shared = Evaluator(book({**cells, **together}))
    for i, name in enumerate(FUNCTIONS, 1):
        alone = Evaluator(book({**cells, "D1": f"={name}(B1:B{n},A1:A{n})"}))
        assert shared.cell_value("Data", i, 4) == alone.cell_value("Data", 1, 4)


def test_the_sums_of_a_pair_are_found_once() -> None:
    cells = {f"A{r}": float(r) for r in range(1, 9)} | {
        f"B{r}": r * 2.0 + r % 3 for r in range(1, 9)
    }
    evaluator = Evaluator(book({**cells, "D1": "=SLOPE(B1:B8,A1:A8)", "D2": "=RSQ(B1:B8,A1:A8)"}))
    evaluator.cell_value("Data", 1, 4)
    evaluator.cell_value("Data", 2, 4)
    y = evaluator._range_arg(Ref("Data", 1, 2, 8, 2))
    assert isinstance(y, RangeValue)
    assert len(y._paired) == 1  # one pair's sums, shared by SLOPE and RSQ
