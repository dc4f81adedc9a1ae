"""Which formulas read a cell, within the first rows of each reference (the window
``formula_dependents.refs_roles`` looks at): following a regression's dependents asks this for
each of its statistic cells, round after round.

Each reference is held once per column it spans, as the span of rows it reads there (at most
WINDOW rows), sorted by first row: the readers of a cell are the spans of its column around its
row, found by one binary search (spans are short, so only those starting at most WINDOW - 1 rows
above it can hold it). Listing every cell of every window (eleven entries for each column a
formula reads) cost more than the following itself. A reference too wide to list puts its
formula among those always tried (``wide``).
"""

from __future__ import annotations

from bisect import bisect_left, bisect_right

from auditor.formula.syntax import Ref

Key = tuple[str, int, int]  # a formula cell: (sheet, row, column)
Address = tuple[str, int, int]  # a cell: (sheet in lower case, row, column)
WINDOW = 11  # rows of a reference looked at, from its first
MAX_LISTED = 4096  # cells of a window beyond which a reference is "wide"


class CellReaders:
    """The formulas reading each cell (within each reference's window), and the wide ones."""

    def __init__(self, refs_by_key: dict[Key, list[Ref]]) -> None:
        self.wide: set[Key] = set()
        spans: dict[tuple[str, int], list[tuple[int, int, Key]]] = {}
        for key, refs in refs_by_key.items():
            for ref in refs:
                rows = min(ref.r2, ref.r1 + WINDOW - 1) - ref.r1 + 1
                if rows * (ref.c2 - ref.c1 + 1) > MAX_LISTED:
                    self.wide.add(key)
                    continue
                sheet = ref.sheet.lower()
                for col in range(ref.c1, ref.c2 + 1):
                    spans.setdefault((sheet, col), []).append((ref.r1, ref.r1 + rows - 1, key))
        self._firsts: dict[tuple[str, int], list[int]] = {}
        self._spans: dict[tuple[str, int], list[tuple[int, int, Key]]] = {}
        for column, listed in spans.items():
            listed.sort(key=lambda span: span[0])  # stable: equal first rows keep their order
            self._spans[column] = listed
            self._firsts[column] = [span[0] for span in listed]
        self._found: dict[Address, set[Key]] = {}

    def of(self, address: Address) -> set[Key]:
        """The formulas whose window holds the cell (not the wide ones); do not change it."""
        found = self._found.get(address)
        if found is None:
            sheet, row, col = address
            firsts = self._firsts.get((sheet, col))
            found = set()
            if firsts is not None:
                spans = self._spans[(sheet, col)]
                start = bisect_left(firsts, row - WINDOW + 1)
                for first, last, key in spans[start : bisect_right(firsts, row)]:
                    if first <= row <= last:
                        found.add(key)
            self._found[address] = found
        return found
