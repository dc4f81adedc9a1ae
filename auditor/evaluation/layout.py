"""Where a workbook's formula cells and array-formula blocks are, indexed for range reads."""

from __future__ import annotations

from dataclasses import dataclass

from auditor.grid import parse_cell
from auditor.read.workbook import Cell, Workbook, sheet_index

_Key = tuple[str, int, int]  # (sheet, row, col)
_Bounds = tuple[int, int, int, int]  # (r1, c1, r2, c2)


def _block_bounds(cell: Cell) -> _Bounds | None:
    if not cell.array_ref:
        return None
    first, _, last = cell.array_ref.partition(":")
    r1, c1 = parse_cell(first)
    r2, c2 = parse_cell(last or first)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)


@dataclass(frozen=True)
class FormulaLayout:
    """Formula cells (sheet -> column -> sorted rows), array blocks by anchor, block members."""

    formula_rows: dict[str, dict[int, list[int]]]
    blocks: dict[str, dict[tuple[int, int], _Bounds]]
    members: dict[_Key, _Bounds]

    @staticmethod
    def of(workbook: Workbook) -> FormulaLayout:
        formula_rows: dict[str, dict[int, list[int]]] = {}
        blocks: dict[str, dict[tuple[int, int], _Bounds]] = {}
        members: dict[_Key, _Bounds] = {}
        for sheet in workbook.sheets.values():
            by_col: dict[int, list[int]] = {}
            index = sheet_index(sheet)
            # The reader's list of formula cells; a compact store holds every formula cell as
            # an object: only those are walked.
            stored = getattr(sheet.cells, "stored_cells", None)
            if index is not None:
                found = ((c.row, c.col, c) for c in index.formulas)
            elif stored is not None:
                found = ((c.row, c.col, c) for c in stored())
            else:
                found = ((r, c, cell) for (r, c), cell in sheet.cells.items())
            for row, col, cell in found:
                if cell.formula:
                    by_col.setdefault(col, []).append(row)
                    bounds = _block_bounds(cell)
                    if bounds is not None and (bounds[0], bounds[1]) == (row, col):
                        blocks.setdefault(sheet.name, {})[(row, col)] = bounds
            formula_rows[sheet.name] = {c: sorted(rows) for c, rows in by_col.items()}
        for (sheet_name, _row, _col), bounds in workbook.array_anchors.items():
            blocks.setdefault(sheet_name, {})[(bounds[0], bounds[1])] = bounds
        for sheet_name, sheet_blocks in blocks.items():
            for r1, c1, r2, c2 in sheet_blocks.values():
                for row in range(r1, r2 + 1):
                    for col in range(c1, c2 + 1):
                        members[(sheet_name, row, col)] = (r1, c1, r2, c2)
        return FormulaLayout(formula_rows, blocks, members)
