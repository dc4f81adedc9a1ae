"""A block read twice is read once: every caller still gets the block's values, in an array of
its own (a caller that writes into its copy changes nobody else's)."""

from __future__ import annotations

from test_evaluate import book, columns

from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Ref


def test_a_block_read_again_has_the_same_values_in_an_array_of_its_own() -> None:
    workbook = book(columns(A=[1.0, 2.0, "=A1+A2", "text", None], B=["=A3*2"]))
    evaluator = Evaluator(workbook)
    block = Ref("Data", 1, 1, 5, 1)
    first = evaluator.range_values(block)
    assert first[:, 0].tolist() == [1.0, 2.0, 3.0, "text", None]  # 1 + 2 = 3 by hand
    first[0, 0] = "changed by its caller"
    second = evaluator.range_values(block)
    assert second[:, 0].tolist() == [1.0, 2.0, 3.0, "text", None]
    assert second is not first
    assert evaluator.cell_value("Data", 1, 2) == 6.0  # a formula reading the block: 3 × 2
