"""Rewriting a sibling block's formula for another block: the fixes the sibling checks give.

:func:`translate` moves a formula from one block onto another (its data and its own block's
cells); :func:`repoint` moves only the references into one block's data onto another's.
"""

from __future__ import annotations

from auditor.checks.formula_blocks import Block, a1_as_written, frame_of, resolve
from auditor.formula.operands import Corner, Reference
from auditor.formula.r1c1 import rewrite_references


def _quoted(sheet: str) -> str:
    plain = sheet.replace("_", "").isalnum() and not sheet[0].isdigit()
    return sheet if plain else "'" + sheet.replace("'", "''") + "'"


def translate(formula: str, source: Block, cell_sheet: str, target: Block) -> str:
    """A sibling's formula rewritten for ``target``: its data and its own block's cells."""
    sr1, sc1, sr2, _ = source.data_box
    tr1, tc1, tr2, _ = target.data_box

    def move(ref: Reference) -> str | None:
        frame = frame_of(ref, source, cell_sheet)
        if frame == "other":
            return None
        if frame == "data":
            prefix = ""
            if ref.prefix or target.data_sheet.lower() != target.sheet.lower():
                prefix = _quoted(target.data_sheet) + "!"
            start_rows, end_rows, cols = tr1 - sr1, tr2 - sr2, tc1 - sc1
        else:
            prefix = "" if not ref.prefix else _quoted(target.sheet) + "!"
            start_rows = end_rows = target.top[0] - source.top[0]
            cols = target.top[1] - source.top[1]

        def shift(c: Corner, rows: int) -> Corner:
            row = None if c.row is None else c.row + rows
            col = None if c.col is None else c.col + cols
            return Corner(row, col, c.row_absolute, c.col_absolute)

        end = None if ref.end is None else shift(ref.end, end_rows)
        return a1_as_written(Reference(prefix, shift(ref.start, start_rows), end))

    return rewrite_references(formula, move)


def repoint(formula: str, cell_sheet: str, wrong: Block, right: Block) -> str:
    """The formula with each reference into ``wrong``'s data moved onto ``right``'s data."""
    wr1, wc1, wr2, _ = wrong.data_box
    rr1, rc1, rr2, _ = right.data_box

    def move(ref: Reference) -> str | None:
        target = resolve(ref, wrong, cell_sheet)
        if target is None or not wrong.owns_data(
            target.sheet, target.r1, target.c1, target.r2, target.c2
        ):
            return None
        prefix = ref.prefix
        if prefix or right.data_sheet.lower() != cell_sheet.lower():
            prefix = _quoted(right.data_sheet) + "!"
            if right.data_sheet.lower() == cell_sheet.lower():
                prefix = ""

        def shift(c: Corner, rows: int) -> Corner:
            row = None if c.row is None else c.row + rows
            col = None if c.col is None else c.col + rc1 - wc1
            return Corner(row, col, c.row_absolute, c.col_absolute)

        end = None if ref.end is None else shift(ref.end, rr2 - wr2)
        return a1_as_written(Reference(prefix, shift(ref.start, rr1 - wr1), end))

    return rewrite_references(formula, move)
