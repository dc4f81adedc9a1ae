"""ParsedOrder (auditor.locate.parsed_order) gives the parsed formulas of a set in the order a
walk over every parsed formula meets them, checked against that walk on generated sets."""

from __future__ import annotations

import random

from auditor.locate.parsed_order import ParsedOrder

Key = tuple[str, int, int]


def _walk(parsed: dict[Key, str], wanted: set[Key], position: int) -> list[int]:
    """The straightforward way: every parsed formula in turn, kept when wanted."""
    return [i for i, key in enumerate(parsed) if key in wanted and i > position]


def test_positions_match_a_walk_over_every_formula() -> None:
    rng = random.Random(14)
    for _ in range(200):
        cells = {(rng.choice(["Data", "Fit", "b"]), rng.randint(1, 40), rng.randint(1, 6))
                 for _ in range(rng.randint(0, 60))}  # fmt: skip
        keys = list(cells)
        rng.shuffle(keys)  # the workbook's order need not be sorted
        parsed = {key: f"=A{key[1]}" for key in keys}
        order = ParsedOrder(parsed)
        parsed_keys = list(parsed)
        # some formulas, and some cells that hold no formula (a reader of a typed cell)
        wanted = set(rng.sample(keys, rng.randint(0, len(keys))))
        wanted |= {("Data", rng.randint(41, 50), 1) for _ in range(rng.randint(0, 3))}
        position = rng.randint(-1, len(keys))
        got = order.after(wanted, position)
        assert got == _walk(parsed, wanted, position)
        assert [order.keys[p] for p in got] == [parsed_keys[p] for p in got]


def test_nothing_wanted_or_nothing_parsed() -> None:
    assert ParsedOrder({}).after({("Data", 1, 1)}, -1) == []
    order = ParsedOrder({("Data", 2, 2): "=A2", ("Data", 1, 1): "=B1"})
    assert order.after(set(), -1) == []
    assert order.after({("Data", 1, 1), ("Data", 2, 2)}, -1) == [0, 1]
    assert order.after({("Data", 1, 1), ("Data", 2, 2)}, 0) == [1]
