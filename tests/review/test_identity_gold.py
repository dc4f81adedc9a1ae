"""Finding identities are stored in baselines and waivers and used as SARIF fingerprints, so the
relative R1C1 text they are built from must not move when the code does.

Gold: ``tests/gold/fixture_r1c1.json`` holds every formula of the fixture corpus with the R1C1
text the identity module's own converter gave before the two converters were merged into
:mod:`auditor.formula.r1c1` (commit db42477). The merged converter must give the same text.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from auditor.review.identity import formula_r1c1

GOLD = Path(__file__).parents[1] / "gold" / "fixture_r1c1.json"
ROWS = json.loads(GOLD.read_text(encoding="utf-8"))["rows"]


def test_the_gold_covers_the_corpus() -> None:
    assert len(ROWS) >= 700
    assert len({row[0] for row in ROWS}) >= 20  # workbooks


def test_every_fixture_formula_keeps_its_identity_text() -> None:
    changed = [
        (book, cell, formula, want, got)
        for book, cell, formula, want in ROWS
        if (got := formula_r1c1(formula, cell)) != want
    ]
    assert changed == []


@pytest.mark.parametrize(
    ("formula", "expected"),
    [
        ("=SUM(A:A)", "=SUM(C[-4])"),  # one whole column written once, as the R1C1 view does
        ("= SUM( A1 , B2 )", "=SUM(R[-3]C[-4],R[-2]C[-3])"),  # spacing is not identity
        ("=SUM($A:$B)", "=SUM(C1:C2)"),
        ('=T("a  b")+B2', '=T("a  b")+R[-2]C[-3]'),  # spaces inside text are kept
        ("=A1)", "=A1)"),  # unreadable: kept as written (it raised IndexError before)
    ],
)
def test_identity_r1c1_examples(formula: str, expected: str) -> None:
    assert formula_r1c1(formula, "S!E4") == expected
