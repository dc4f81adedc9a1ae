"""Following what a formula reads keeps, beside each list, a set of what was met: the lists are
those the plain list look-ups give, in the same order, under generated sequences of ranges and
cells met directly and reaches merged."""

from __future__ import annotations

import random
from dataclasses import dataclass, field

import pytest

from auditor.formula.syntax import Ref
from auditor.locate.handbuilt_reach import Key, Reach


@dataclass
class _Plain:
    """The same bookkeeping with list look-ups only: the straightforward way."""

    vectors: list[Ref] = field(default_factory=list)
    cells: list[Key] = field(default_factory=list)
    read_by: dict[Key, Ref] = field(default_factory=dict)

    def add_vector(self, ref: Ref) -> None:
        if ref not in self.vectors:
            self.vectors.append(ref)

    def add_cell(self, key: Key) -> None:
        self.cells.append(key)

    def add(self, other: _Plain) -> None:
        for ref in other.vectors:
            self.add_vector(ref)
        for key in other.cells:
            if key not in self.cells:
                self.cells.append(key)
        for key, ref in other.read_by.items():
            self.read_by.setdefault(key, ref)


@pytest.mark.parametrize("seed", range(30))
def test_the_lists_are_those_plain_look_ups_give(seed: int) -> None:
    rng = random.Random(seed)
    fast, plain = [Reach() for _ in range(4)], [_Plain() for _ in range(4)]
    for _ in range(300):
        i, j = rng.randrange(4), rng.randrange(4)
        roll = rng.random()
        if roll < 0.4:
            ref = Ref(rng.choice(["Data", "Fit"]), rng.randrange(1, 4), rng.randrange(1, 4), 20, 3)
            fast[i].add_vector(ref)
            plain[i].add_vector(ref)
        elif roll < 0.7:
            key = (rng.choice(["Data", "Fit"]), rng.randrange(1, 6), rng.randrange(1, 3))
            fast[i].add_cell(key)
            plain[i].add_cell(key)
            if rng.random() < 0.3:
                column = Ref("Data", 1, key[2], 9, key[2])
                fast[i].read_by.setdefault(key, column)
                plain[i].read_by.setdefault(key, column)
        elif i != j:
            fast[i].add(fast[j])
            plain[i].add(plain[j])
    for reach, reference in zip(fast, plain, strict=True):
        assert reach.vectors == reference.vectors
        assert reach.cells == reference.cells
        assert reach.read_by == reference.read_by
