"""The candidates' own words worked out once (roles_words._Named) point where the per-call
computation points, on generated headers and statements' words (prefixes of four letters or
more match, as the words module says; words shared by two headers name neither)."""

from __future__ import annotations

import random

from auditor.diagnose.roles_words import _Named
from auditor.formula.syntax import Ref
from auditor.locate.meaning import Header
from auditor.locate.words import shared

VOCABULARY = (
    "load loads fuel time temp temperature mg/l dose day height shoot leaf count flow litre conc "
    "abs absorbance"
).split()


def _plain_points_at(words: frozenset[str], candidates: list[Header]):  # type: ignore[no-untyped-def]
    if not words or not shared(words, frozenset(w for h in candidates for w in h.words)):
        return None
    hits = []
    for index, header in enumerate(candidates):
        others = frozenset(w for j, h in enumerate(candidates) if j != index for w in h.words)
        own = frozenset(w for w in header.words if not shared(frozenset([w]), others))
        matched = shared(own, words)
        if matched:
            hits.append((header, matched))
    return hits[0] if len(hits) == 1 else None


def test_named_candidates_point_as_the_plain_computation() -> None:
    rng = random.Random(17)
    compared = pointed = 0
    for case in range(300):
        candidates = [
            Header(
                f"h{i}",
                f"Data!{chr(65 + i)}1",
                Ref("Data", 2, i + 1, 20, i + 1),
                frozenset(rng.sample(VOCABULARY, rng.randint(1, 3))),
            )  # fmt: skip
            for i in range(rng.randint(1, 5))
        ]
        named = _Named(candidates)
        for _ in range(6):
            words = frozenset(rng.sample(VOCABULARY, rng.randint(0, 3)))
            got, want = named.points_at(words), _plain_points_at(words, candidates)
            assert got == want, (case, words)
            compared += 1
            pointed += got is not None
    assert compared == 1800 and pointed > 200
