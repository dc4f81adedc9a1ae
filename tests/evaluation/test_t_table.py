"""The evaluator's inverse t functions against the handbook table of Student t critical values.

Source: tests/reference/t_critical_values.csv, the standard table printed in statistics handbooks
(typed from memory, see tests/reference/README.md), three decimals, so agreement is to ±0.0005.
TINV and T.INV.2T take a two-tailed probability; T.INV takes the left-tail probability.
"""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from auditor.evaluation.evaluator import Evaluator
from auditor.read.workbook import Sheet, Workbook

TABLE = Path(__file__).parents[1] / "reference" / "t_critical_values.csv"
HALF_UNIT = 0.0005  # the table shows three decimals


def rows() -> list[dict[str, str]]:
    with TABLE.open(newline="", encoding="utf-8") as handle:
        return list(csv.DictReader(handle))


@pytest.fixture(scope="module")
def evaluator() -> Evaluator:
    return Evaluator(Workbook("table", "", {"S": Sheet("S")}, [], True))


def test_the_table_is_complete() -> None:
    assert [int(r["df"]) for r in rows()] == [*range(1, 11), 12, 15, 20, 25, 30, 40, 60, 120]


@pytest.mark.parametrize("row", rows(), ids=lambda r: f"df={r['df']}")
@pytest.mark.parametrize("function", ["_xlfn.T.INV.2T", "TINV"])
def test_two_sided_critical_values(
    evaluator: Evaluator, row: dict[str, str], function: str
) -> None:
    df = row["df"]
    for alpha in ("0.05", "0.01"):
        handbook = float(row[f"two_sided_{alpha}"])
        value = evaluator.evaluate(f"={function}({alpha},{df})", "S")
        assert value == pytest.approx(handbook, abs=HALF_UNIT), (function, alpha, df)


@pytest.mark.parametrize("row", rows(), ids=lambda r: f"df={r['df']}")
def test_one_sided_critical_values(evaluator: Evaluator, row: dict[str, str]) -> None:
    handbook = float(row["one_sided_0.05"])
    df = row["df"]
    assert evaluator.evaluate(f"=_xlfn.T.INV(0.95,{df})", "S") == pytest.approx(
        handbook, abs=HALF_UNIT
    )
    # A one-sided 5 % point is the two-sided 10 % point.
    assert evaluator.evaluate(f"=TINV(0.1,{df})", "S") == pytest.approx(handbook, abs=HALF_UNIT)


@pytest.mark.parametrize("row", rows(), ids=lambda r: f"df={r['df']}")
def test_the_critical_value_gives_back_its_probability(
    evaluator: Evaluator, row: dict[str, str]
) -> None:
    # Reading the table the other way: P(|T| > t) at the printed t is 0.05, to the precision
    # the three printed decimals carry (the t density at t times half a unit, bounded by 0.0005).
    df = row["df"]
    p_value = evaluator.evaluate(f"=_xlfn.T.DIST.2T({row['two_sided_0.05']},{df})", "S")
    assert p_value == pytest.approx(0.05, abs=HALF_UNIT)
    assert evaluator.evaluate(f"=TDIST({row['two_sided_0.05']},{df},2)", "S") == pytest.approx(
        0.05, abs=HALF_UNIT
    )
