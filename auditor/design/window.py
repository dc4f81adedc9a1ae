"""The cells inside a small box of a sheet (the words and values around a result block)."""

from __future__ import annotations

from bisect import bisect_left, bisect_right
from collections.abc import Iterator, Mapping
from operator import attrgetter

from auditor.locate.text_cells import text_cells
from auditor.read.workbook import Cell, Sheet, Workbook


def cells_in(
    cells: Mapping[tuple[int, int], Cell], r1: int, c1: int, r2: int, c2: int
) -> Iterator[tuple[tuple[int, int], Cell]]:
    """The cells inside a box: probed one place at a time when the box is smaller than the
    sheet (a window around a result block), else by one walk over the sheet's cells."""
    r1, c1 = max(r1, 1), max(c1, 1)
    if (r2 - r1 + 1) * (c2 - c1 + 1) < len(cells):
        for row in range(r1, r2 + 1):
            for col in range(c1, c2 + 1):
                cell = cells.get((row, col))
                if cell is not None:
                    yield (row, col), cell
        return
    for (row, col), cell in cells.items():
        if r1 <= row <= r2 and c1 <= col <= c2:
            yield (row, col), cell


class TextCells:
    """The text cells of a workbook's sheets in row order, sorted once per sheet, so that the
    words inside each box (the window around a result block) are found by a binary search on
    rows instead of by probing every place of the box (most of them empty or numbers)."""

    def __init__(self, workbook: Workbook) -> None:
        self.workbook = workbook
        self._kept: dict[str, tuple[list[Cell], list[int]]] = {}

    def inside(
        self, sheet: Sheet, r1: int, c1: int, r2: int, c2: int
    ) -> list[tuple[tuple[int, int], Cell]]:
        """The cells holding text inside the box, by row and then column (as
        :func:`cells_in` gives them, less the cells that hold no text)."""
        kept = self._kept.get(sheet.name)
        if kept is None:
            cells = sorted(text_cells(self.workbook, sheet), key=attrgetter("row", "col"))
            kept = self._kept[sheet.name] = (cells, [cell.row for cell in cells])
        cells, rows = kept
        start, stop = bisect_left(rows, max(r1, 1)), bisect_right(rows, r2)
        c1 = max(c1, 1)
        return [((cell.row, cell.col), cell) for cell in cells[start:stop] if c1 <= cell.col <= c2]
