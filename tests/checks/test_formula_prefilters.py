"""The text tests that spare a parse give what the parse would: a formula without a NUMBER
token has no typed count (typed-count-in-formula), and one without ':' has no call reading a
column over other rows (ranges-disagree). Checked on every formula of the fixture workbooks
and on generated formulas (typed numbers, names, ranges, whole columns, other sheets)."""

from __future__ import annotations

import random
from pathlib import Path

from auditor.checks.formula_audit import COUNT_KEYS, typed_counts
from auditor.checks.formula_support import may_hold_number, parse_quietly
from auditor.checks.formulas import _column_readers
from auditor.formula.syntax import Ref
from auditor.read.open import read_workbook

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
KEYS = (*COUNT_KEYS, "p_slope", "se_intercept", "t_slope", "slope")
X, Y = Ref("Data", 2, 1, 31, 1), Ref("Data", 2, 2, 31, 2)


def _generated(seed: int) -> str:
    rng = random.Random(seed)
    cells = ["A5", "$B$7", "E11", "Data!C3", "'My Run'!D4", "slope_cell", "Table1[Load]"]
    ranges = ["A2:A31", "B3:B30", "A:A", "Data!B2:B31", "'My Run'!A1:A9", "2:2", "B2:INDEX(B:B,9)"]
    numbers = ["12", "1", "0.5", "1E3", "28-2", "10%"]
    pieces = cells + ranges + numbers
    calls = [
        "T.DIST.2T(ABS({}),{})",
        "TDIST({},{},2)",
        "SQRT(1/{}+{})",
        "COUNT({})-{}",
        "{}/{}",
        "AVERAGE({})",
        "DEVSQ({})*{}",
        "F.DIST.RT({},1,{})",
        "-{}",
        "SUM({},{})",
    ]
    text = rng.choice(pieces)
    for _ in range(rng.randint(1, 3)):
        template = rng.choice(calls)
        text = template.format(
            *(text if i == 0 else rng.choice(pieces) for i in range(template.count("{}")))
        )
    return "=" + text


def _formulas() -> list[str]:
    found = [_generated(seed) for seed in range(600)]
    for path in sorted(FIXTURES.glob("*.xlsx")):
        found += [cell.formula for cell in read_workbook(path).formula_cells() if cell.formula]
    return found


def test_no_number_token_no_typed_count_and_no_colon_no_column_reader() -> None:
    counted = read = 0
    for formula in _formulas():
        node = parse_quietly(formula, "Data")
        if node is None:
            continue
        found = [typed for key in KEYS for typed in typed_counts(key, node)]
        if not may_hold_number(formula):
            assert found == [], formula
        counted += bool(found)
        readers = _column_readers(node, X, Y) + _column_readers(node, Y, X)
        if ":" not in formula:
            assert readers == [], formula
        read += bool(readers)
    assert counted > 50 and read > 20  # the tests above are not empty


def test_a_formula_that_cannot_be_tokenized_is_left_to_the_parse() -> None:
    assert may_hold_number('=SUM("abc')  # an open string: the parse decides (and fails)
    assert parse_quietly('=SUM("abc', "Data") is None
    assert not may_hold_number("=SLOPE(B2:B31,A2:A31)")
    assert may_hold_number("=T.DIST.2T(ABS(E11),12)")
