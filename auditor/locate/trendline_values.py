"""Typed copies found by value: constants in cells or inside formulas equal to a shown figure."""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass

from auditor.formula.nodes import moved_from
from auditor.formula.syntax import Binary, Node, Number, Unary, children
from auditor.locate.spec import RegressionSpec
from auditor.locate.trendline_figures import (
    MIN_DIGITS_ALONE,
    MIN_DIGITS_PAIRED,
    FollowKey,
    TrendFigures,
    matches,
    put_copy,
    significant_digits,
)
from auditor.read.workbook import Cell, Workbook

DATA_RUN = 5  # numbers stacked this deep in a column are data, not a typed figure


@dataclass(frozen=True)
class Literal:
    cell: Cell
    typed: float  # as typed
    value: float  # with the sign the formula gives it (the same for a constant in a cell)
    in_formula: bool


def _signed(node: Node, sign: float) -> Iterator[tuple[float, float]]:
    """Each number literal of a formula: as typed (a minus written before it included), and
    with the sign the formula applies to it (``=(B2-2.06)/0.54`` gives (2.06, −2.06))."""
    if isinstance(node, Number):
        yield float(node.value), sign * float(node.value)
    elif isinstance(node, Unary) and isinstance(node.operand, Number) and node.op == "-":
        value = -float(node.operand.value)
        yield value, sign * value
    elif isinstance(node, Unary):
        yield from _signed(node.operand, -sign if node.op == "-" else sign)
    elif isinstance(node, Binary) and node.op in ("+", "-", "*", "/"):
        yield from _signed(node.left, sign)
        right_sign = -sign if node.op == "-" else (1.0 if node.op == "/" else sign)
        yield from _signed(node.right, right_sign)
    else:
        for child in children(node):
            yield from _signed(child, 1.0)


def literals_of(
    workbook: Workbook, parsed: dict[FollowKey, Node], data_cells: set[FollowKey]
) -> list[Literal]:
    """Constants typed in cells (outside the data) and number literals inside formulas."""
    found: list[Literal] = []
    signed: dict[
        object, tuple[tuple[float, float], ...]
    ] = {}  # by tree: each is asked up to 3 times
    for sheet in workbook.sheets.values():
        lowered = sheet.name.lower()
        for (row, col), cell in sheet.cells.items():
            if cell.formula is None:
                if (lowered, row, col) in data_cells:
                    continue
                value = cell.value
                if isinstance(value, (int, float)) and not isinstance(value, bool):
                    if math.isfinite(value):
                        found.append(Literal(cell, float(value), float(value), False))
                continue
            node = parsed.get((cell.sheet, cell.row, cell.col))
            if node is None or _continues_copy(parsed, cell, node, signed):
                continue
            found.extend(
                Literal(cell, typed, value, True) for typed, value in _literals(node, signed)
            )
    return found


def _in_data_run(workbook: Workbook, cell: Cell) -> bool:
    sheet = workbook.sheet(cell.sheet)
    assert sheet is not None

    def numeric(row: int) -> bool:
        other = sheet.get(row, cell.col)
        return other is not None and other.formula is None and plain_number(other.value)

    depth, row = 1, cell.row - 1
    while row >= 1 and numeric(row) and depth < DATA_RUN:
        depth, row = depth + 1, row - 1
    row = cell.row + 1
    while numeric(row) and depth < DATA_RUN:
        depth, row = depth + 1, row + 1
    return depth >= DATA_RUN


def plain_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _continues_copy(
    parsed: dict[FollowKey, Node],
    cell: Cell,
    node: Node,
    signed: dict[object, tuple[tuple[float, float], ...]],
) -> bool:
    """The formula repeats the literals of the cell above (or to the left): a copied block.
    ``signed``: each tree's literals (``_signed``) by its identity, filled as they are met."""
    mine = _literals(node, signed)
    if not mine:
        return True
    for row, col in ((cell.row - 1, cell.col), (cell.row, cell.col - 1)):
        other = parsed.get((cell.sheet, row, col))
        if other is not None and _literals(other, signed) == mine:
            return True
    return False


def _literals(
    node: Node, signed: dict[object, tuple[tuple[float, float], ...]]
) -> tuple[tuple[float, float], ...]:
    """``_signed`` of the tree, kept by its identity, or by its maker for a tree moved from a
    shared anchor (references give no literal: the moved trees of one anchor give the same)."""
    key = moved_from(node) or id(node)
    found = signed.get(key)
    if found is None:
        found = signed[key] = tuple(_signed(node, 1.0))
    return found


def attach_by_value(
    workbook: Workbook,
    spec: RegressionSpec,
    literals: list[Literal],
    found: TrendFigures,
    shown: set[str],
    taken: set[str],
) -> None:
    truth = {"slope": found.slope, "intercept": found.intercept, "r_squared": found.r_squared}
    by_cell: dict[str, list[tuple[str, Cell, float]]] = {}
    for literal in literals:
        if literal.cell.address in taken:
            continue
        for key in sorted(shown):
            for value in dict.fromkeys((literal.typed, literal.value)):
                if matches(value, truth[key]):
                    by_cell.setdefault(literal.cell.address, []).append((key, literal.cell, value))
                    break
    for matched in by_cell.values():
        first = matched[0][1]
        if first.formula is None and plain_number(first.value) and _in_data_run(workbook, first):
            continue  # a number in a column of data that happens to agree
        keys = {key for key, _, _ in matched} | _keys_beside(first, by_cell)
        needed = MIN_DIGITS_PAIRED if len(keys) > 1 else MIN_DIGITS_ALONE
        for key, cell, value in matched:
            if significant_digits(value) >= needed:
                put_copy(spec, key, cell, value)


def _keys_beside(cell: Cell, by_cell: dict[str, list[tuple[str, Cell, float]]]) -> set[str]:
    """The figures that cells of the same little block (within two rows and columns) match: a
    slope typed beside a matching intercept and R² is a copy of the label as much as an
    equation holding both figures is."""
    found: set[str] = set()
    for matched in by_cell.values():
        other = matched[0][1]
        if other.address == cell.address or other.sheet != cell.sheet:
            continue
        if abs(other.row - cell.row) <= 2 and abs(other.col - cell.col) <= 2:
            found.update(key for key, _, _ in matched)
    return found
