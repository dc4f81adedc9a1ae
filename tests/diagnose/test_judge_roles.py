"""judge_roles (one reading of the candidate headers for both judgements, as the axis-words
checks use it) gives what judge_swap and then judge_shift give one by one, on generated headers,
headers beside them and statements of every strength (words from a small vocabulary, so that
swaps, shifts, agreements and contradictions all occur)."""

from __future__ import annotations

import random

from auditor.diagnose.roles_words import Judgement, judge_roles, judge_shift, judge_swap
from auditor.formula.syntax import Ref
from auditor.locate.meaning import Header, Meaning
from auditor.locate.words import Statement

VOCABULARY = "load fuel temp dose height leaf count flow conc absorbance mg/l ntu".split()


def _words(rng: random.Random) -> frozenset[str]:
    return frozenset(rng.sample(VOCABULARY, rng.randint(0, 2)))


def _header(rng: random.Random, col: int) -> Header:
    words = frozenset(rng.sample(VOCABULARY, rng.randint(1, 2)))
    ref = Ref("Data", 3, col, 14, col)
    return Header(" ".join(sorted(words)), f"Data!{chr(64 + col)}2", ref, words)


def _meaning(rng: random.Random) -> Meaning:
    x, y = _header(rng, 2), _header(rng, 3)
    statements = [
        Statement(f"s{i}", f"Out!E{i + 2}", rng.choice(["rate", "unit", "title"]),
                  _words(rng), _words(rng))
        for i in range(rng.randint(0, 3))
    ]  # fmt: skip
    return Meaning(
        x=x,
        y=y,
        x_beside=[_header(rng, 1)] if rng.random() < 0.5 else [],
        y_beside=[_header(rng, 4)] if rng.random() < 0.5 else [],
        statements=statements,
    )


def _said(judgement: Judgement | None) -> object:
    if judgement is None:
        return None
    cues = [(c.statement.cell, c.role, c.matched, c.header.cell, c.strong) for c in judgement.cues]
    meant = judgement.meant.cell if judgement.meant else None
    return judgement.kind, judgement.role, cues, meant, judgement.conventions


def test_judge_roles_gives_the_two_judgements_one_by_one() -> None:
    rng = random.Random(5)
    kinds = {"swap": 0, "shift": 0, "none": 0}
    for _ in range(600):
        meaning = _meaning(rng)
        swap = judge_swap(meaning)
        shift = judge_shift(meaning) if swap is None else None
        together = judge_roles(meaning)
        assert (_said(together[0]), _said(together[1])) == (_said(swap), _said(shift))
        kinds["swap" if swap else "shift" if shift else "none"] += 1
    assert min(kinds.values()) >= 20, kinds  # the generator reaches every outcome


def test_no_headers_no_judgement() -> None:
    assert judge_roles(Meaning()) == (None, None)
