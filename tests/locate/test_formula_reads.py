"""The formulas reading a block, found with their references held as arrays (or, for a few, one
by one), are those testing each reference of each formula in turn gives: generated formulas on a
few sheets (names in different cases), reading cells, columns and ranges, some reading nothing."""

from __future__ import annotations

import random

import pytest

from auditor.formula.syntax import Ref
from auditor.locate import formula_reads
from auditor.locate.formula_reads import FormulaReads, Key
from auditor.locate.spec import overlaps


def _each_in_turn(refs_by_key: dict[Key, list[Ref]], blocks: list[Ref], sheets: set[str]):
    return {
        key
        for key, refs in refs_by_key.items()
        if key[0].lower() in sheets and any(overlaps(ref, b) for ref in refs for b in blocks)
    }


def _ref(rng: random.Random) -> Ref:
    sheet = rng.choice(["Data", "DATA", "Fit", "Other"])
    r1, c1 = rng.randrange(1, 40), rng.randrange(1, 8)
    return Ref(sheet, r1, c1, r1 + rng.choice([0, 0, 5, 30]), c1 + rng.choice([0, 0, 1]))


@pytest.mark.parametrize("seed", range(40))
@pytest.mark.parametrize("small", [0, 1_000_000])  # numpy over arrays; one by one
def test_the_readers_are_those_each_reference_in_turn_gives(
    seed: int, small: int, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(formula_reads, "SMALL", small)
    rng = random.Random(seed)
    refs_by_key: dict[Key, list[Ref]] = {}
    for i in range(rng.randrange(0, 60)):
        key = (rng.choice(["Data", "Fit", "fit"]), i + 1, rng.randrange(1, 9))
        refs_by_key[key] = [_ref(rng) for _ in range(rng.randrange(0, 4))]
    reads = FormulaReads(refs_by_key)
    for _ in range(20):
        blocks = [_ref(rng) for _ in range(rng.randrange(0, 3))]
        sheets = {rng.choice(["data", "fit", "other", "none"]) for _ in range(2)}
        assert reads.readers(blocks, sheets) == _each_in_turn(refs_by_key, blocks, sheets)


def test_a_formula_reading_the_data_on_a_sheet_named_in_another_case() -> None:
    refs = {("Fit", 2, 5): [Ref("DATA", 3, 1, 9, 1)], ("Fit", 3, 5): [Ref("Data", 20, 1, 30, 1)]}
    x = Ref("Data", 2, 1, 12, 1)
    assert FormulaReads(refs).readers([x], {"fit"}) == {("Fit", 2, 5)}
    assert FormulaReads(refs).readers([x], {"data"}) == set()  # readers on Fit only
