"""The cells inside a small box of a sheet (the words and values around a result block)."""

from __future__ import annotations

from collections.abc import Iterator, Mapping

from auditor.read.workbook import Cell


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
