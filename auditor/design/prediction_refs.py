"""Which cells a prediction formula refers to: the slope and intercept cells of a regression."""

from __future__ import annotations

from auditor.formula.syntax import Binary, Node, RefNode, walk
from auditor.grid import column_letter
from auditor.read.workbook import Cell


def cell_key(cell: Cell) -> tuple[str, int, int]:
    return (cell.sheet.lower(), cell.row, cell.col)


def coord(row: int, col: int) -> str:
    return f"{column_letter(col)}{row}"


def is_cell(node: Node, cells: set[tuple[str, int, int]]) -> bool:
    return (
        isinstance(node, RefNode)
        and node.ref.is_cell
        and (node.ref.sheet.lower(), node.ref.r1, node.ref.c1) in cells
    )


def other_operand(product: Binary, slope_cells: set[tuple[str, int, int]]) -> Node | None:
    if is_cell(product.left, slope_cells):
        return product.right
    if is_cell(product.right, slope_cells):
        return product.left
    return None


def refers_to(node: Node, cells: set[tuple[str, int, int]]) -> bool:
    return any(is_cell(sub, cells) for sub in walk(node))
