"""Grouping the calls that name a (y, x) pair into regressions."""

from __future__ import annotations

from auditor.formula.syntax import Ref
from auditor.locate.spec import PairUse, overlaps


class PairGroups:
    """Union-find over pair uses: overlapping (or swapped) ranges are one regression."""

    def __init__(self, uses: list[PairUse]):
        self.uses = uses
        self.parent = list(range(len(uses)))
        for i, a in enumerate(uses):
            for j in range(i):
                b = uses[j]
                same = overlaps(a.x, b.x) and overlaps(a.y, b.y)
                swapped = overlaps(a.x, b.y) and overlaps(a.y, b.x)
                if same or swapped:
                    self._union(i, j)

    def _find(self, i: int) -> int:
        while self.parent[i] != i:
            self.parent[i] = self.parent[self.parent[i]]
            i = self.parent[i]
        return i

    def _union(self, i: int, j: int) -> None:
        self.parent[self._find(i)] = self._find(j)

    def groups(self) -> list[list[PairUse]]:
        out: dict[int, list[PairUse]] = {}
        for i, use in enumerate(self.uses):
            out.setdefault(self._find(i), []).append(use)
        return list(out.values())


def _box(uses: list[PairUse]) -> tuple[str, int, int, int, int] | None:
    if not uses:
        return None
    sheet = uses[0].cell.sheet
    rows = [u.cell.row for u in uses if u.cell.sheet == sheet]
    cols = [u.cell.col for u in uses if u.cell.sheet == sheet]
    return sheet, min(rows) - 1, min(cols) - 1, max(rows) + 1, max(cols) + 1


def _inside(use: PairUse, box: tuple[str, int, int, int, int] | None) -> bool:
    return box is not None and (
        use.cell.sheet == box[0]
        and box[1] <= use.cell.row <= box[3]
        and box[2] <= use.cell.col <= box[4]
    )


def adopt_strays(groups: list[list[PairUse]]) -> list[list[PairUse]]:
    """A call sitting inside another block but naming this block's data (a block copied with an
    absolute reference left pointing back) belongs to the block it sits in: the mismatch of
    ranges is a finding of that block, not a second regression."""
    for group in groups:
        for use in list(group):
            rest = [u for u in group if u is not use]
            if not rest or _inside(use, _box(rest)):
                continue
            for other in groups:
                if other is not group and _inside(use, _box(other)):
                    group.remove(use)
                    other.append(use)
                    break
    return [g for g in groups if g]


def primary_pair(uses: list[PairUse]) -> tuple[Ref, Ref]:
    """The (x, y) most calls agree on; ties go to the longest range (the table meant)."""
    votes: dict[tuple[Ref, Ref], int] = {}
    for use in uses:
        votes[(use.x, use.y)] = votes.get((use.x, use.y), 0) + 1

    # A swapped call (SLOPE(x, y)) votes for the reversed pair; the majority orientation wins.
    def score(pair: tuple[Ref, Ref]) -> tuple[int, int]:
        x, y = pair
        agreeing = sum(n for (ox, oy), n in votes.items() if overlaps(ox, x) and overlaps(oy, y))
        return agreeing, (y.r2 - y.r1) + (x.r2 - x.r1)

    return max(votes, key=score)
