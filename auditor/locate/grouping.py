"""Grouping the calls that name a (y, x) pair into regressions."""

from __future__ import annotations

from auditor.formula.syntax import Ref
from auditor.locate.spec import PairUse, overlaps

CORRELATION_FUNCS = frozenset({"CORREL", "PEARSON"})


def _lagged(use: PairUse) -> bool:
    """x and y in one column of one sheet: a lag (CORREL(A3:A101, A2:A100)), by design."""
    return use.x.sheet.lower() == use.y.sheet.lower() and (use.x.c1, use.x.c2) == (
        use.y.c1,
        use.y.c2,
    )


def _mostly_same_rows(a: Ref, b: Ref) -> bool:
    """The same columns of one sheet, sharing at least half of the shorter range's rows: one
    author's range, edited (a range left short, a range moved by a row), not two data sets."""
    if a.sheet.lower() != b.sheet.lower() or (a.c1, a.c2) != (b.c1, b.c2):
        return False
    shared = min(a.r2, b.r2) - max(a.r1, b.r1) + 1
    return 2 * shared >= min(a.r2 - a.r1, b.r2 - b.r1) + 1


def same_regression(a: PairUse, b: PairUse) -> bool:
    """Whether two calls name one regression. The author's ranges define a regression: ranges
    that merely touch (the rising and the falling edge of a wave, SLOPE over rows 1-33 and over
    33-96) are two; so are two models of one table (a quadratic LINEST beside a straight line
    through the origin). Lagged calls are one regression only with identical ranges."""
    if a.function == "LINEST" and b.function == "LINEST" and a.intercept != b.intercept:
        return False
    if _lagged(a) or _lagged(b):
        return (a.x, a.y) == (b.x, b.y) or (a.x, a.y) == (b.y, b.x)
    if (a.x.c2 - a.x.c1) == (b.x.c2 - b.x.c1) and (
        _mostly_same_rows(a.x, b.x) and _mostly_same_rows(a.y, b.y)
    ):
        return True
    one_column = a.x.c1 == a.x.c2 and b.x.c1 == b.x.c2
    return one_column and _mostly_same_rows(a.x, b.y) and _mostly_same_rows(a.y, b.x)


def correlation_only(uses: list[PairUse]) -> bool:
    """CORREL/PEARSON alone measure association; they are not a regression (design)."""
    return all(use.function in CORRELATION_FUNCS for use in uses)


class PairGroups:
    """Union-find over pair uses: calls naming one regression (see :func:`same_regression`)."""

    def __init__(self, uses: list[PairUse]):
        self.uses = uses
        self.parent = list(range(len(uses)))
        # Two calls name one regression only over ranges of the same sheets (x with x and y
        # with y, or swapped): only calls of one set of sheets are compared.
        earlier: dict[frozenset[str], list[int]] = {}
        for i, a in enumerate(uses):
            sheets = frozenset((a.x.sheet.lower(), a.y.sheet.lower()))
            for j in earlier.setdefault(sheets, []):
                if same_regression(a, uses[j]):
                    self._union(i, j)
            earlier[sheets].append(i)

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
    """The cells a block's calls span, widened by one cell along the block: a column of
    statistics reaches one row above and below, not into the column beside it (a grid of
    regressions, one per column, puts a neighbour's calls there)."""
    if not uses:
        return None
    sheet = uses[0].cell.sheet
    rows = [u.cell.row for u in uses if u.cell.sheet == sheet]
    cols = [u.cell.col for u in uses if u.cell.sheet == sheet]
    r1, c1, r2, c2 = min(rows), min(cols), max(rows), max(cols)
    column, row = c1 == c2 and r1 < r2, r1 == r2 and c1 < c2
    return sheet, r1 - (not row), c1 - (not column), r2 + (not row), c2 + (not column)


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
                # a lone call is no block: it adopts nothing (an R² alone at the end of one
                # row of a grid is no home for the next row's R²)
                if other is not group and len(other) > 1 and _inside(use, _box(other)):
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
