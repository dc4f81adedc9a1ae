"""The formula cells and array blocks a range of a sheet holds, found without walking them all.

The evaluator looks for the formula cells inside every range a formula reads (to evaluate them
first, and to put their values into the block it reads), and for the array-formula blocks the
range overlaps. Walking every formula column and every block of the sheet for each reference
costs columns × references (or blocks × references): on a sheet of fifty formula columns, or
of eight hundred single-cell array formulas, most of the evaluation. Here the columns are kept
sorted and the blocks listed under each column they span; what a range holds comes back in the
order of the layout (the order the sheet's cells were met), the order of the walk over all.
"""

from __future__ import annotations

from bisect import bisect_left, bisect_right

from auditor.formula.syntax import Ref

Bounds = tuple[int, int, int, int]  # (r1, c1, r2, c2)
Key = tuple[str, int, int]  # (sheet, row, col)


class FormulaIndex:
    """One workbook's formula cells (sheet -> column -> sorted rows) and array blocks (sheet ->
    anchor -> bounds), as the layout lists them, indexed by column."""

    def __init__(
        self,
        formula_rows: dict[str, dict[int, list[int]]],
        blocks: dict[str, dict[tuple[int, int], Bounds]],
    ) -> None:
        self._rows = formula_rows
        self._columns = {sheet: sorted(by_col) for sheet, by_col in formula_rows.items()}
        self._place = {
            sheet: {col: place for place, col in enumerate(by_col)}
            for sheet, by_col in formula_rows.items()
        }
        self._blocks = {sheet: list(by_anchor.values()) for sheet, by_anchor in blocks.items()}
        self._block_places: dict[str, dict[int, list[int]]] = {}  # column -> blocks spanning it
        for sheet, listed in self._blocks.items():
            by_col: dict[int, list[int]] = {}
            for place, (_, c1, _, c2) in enumerate(listed):
                for col in range(c1, c2 + 1):
                    by_col.setdefault(col, []).append(place)
            self._block_places[sheet] = by_col
        self._block_columns = {sheet: sorted(by) for sheet, by in self._block_places.items()}
        self._reached: dict[tuple[str, Ref], list[Key]] = {}

    def columns(self, sheet: str, first: int, last: int) -> list[int]:
        """The formula columns of ``sheet`` from ``first`` to ``last``, in the layout's order."""
        columns = self._columns.get(sheet)
        if not columns:
            return []
        found = columns[bisect_left(columns, first) : bisect_right(columns, last)]
        if len(found) > 1:
            found.sort(key=self._place[sheet].__getitem__)
        return found

    def formula_cells(
        self, sheet: str, r1: int, c1: int, r2: int, c2: int
    ) -> list[tuple[int, int]]:
        """(row, col) of the formula cells in the block, column by column in the layout's
        order, rows ascending."""
        out: list[tuple[int, int]] = []
        by_col = self._rows.get(sheet, {})
        for col in self.columns(sheet, c1, c2):
            rows = by_col[col]
            out.extend((row, col) for row in rows[bisect_left(rows, r1) : bisect_right(rows, r2)])
        return out

    def blocks_over(self, sheet: str, r1: int, c1: int, r2: int, c2: int) -> list[Bounds]:
        """The array blocks overlapping the block, in the layout's order."""
        listed = self._blocks.get(sheet)
        if not listed:
            return []
        columns = self._block_columns[sheet]
        lo, hi = bisect_left(columns, c1), bisect_right(columns, c2)
        if hi - lo >= len(listed):  # a range across more columns than there are blocks
            places: list[int] = list(range(len(listed)))
        else:
            by_col = self._block_places[sheet]
            places = sorted({place for col in columns[lo:hi] for place in by_col[col]})
        return [
            listed[place]
            for place in places
            if listed[place][0] <= r2
            and r1 <= listed[place][2]
            and listed[place][1] <= c2
            and c1 <= listed[place][3]
        ]

    def reached(self, sheet: str, ref: Ref) -> list[Key]:
        """The formula cells and array anchors a reference on ``sheet`` (the workbook's own
        spelling) reaches: what must be evaluated before a formula reading it. Found once per
        reference (a range read by hundreds of formulas is looked into once)."""
        found = self._reached.get((sheet, ref))
        if found is None:
            cells = self.formula_cells(sheet, ref.r1, ref.c1, ref.r2, ref.c2)
            anchors = self.blocks_over(sheet, ref.r1, ref.c1, ref.r2, ref.c2)
            found = [(sheet, row, col) for row, col in cells]
            found.extend((sheet, b_r1, b_c1) for b_r1, b_c1, _, _ in anchors)
            self._reached[(sheet, ref)] = found
        return found
