"""The formula cells of a workbook that can make a prediction from a regression, indexed once.

A prediction (:mod:`auditor.design.inputs`) is a FORECAST or TREND call, a product with the
regression's slope cell as one factor (``b0 + b1·x``), or a quotient by its slope cell
(``(y − b0)/b1``). So a cell with no such call can predict only from the regression whose slope
cell it multiplies or divides by: indexing the cells by those single-cell operands gives each
regression its few candidates instead of every formula of the workbook (thousands in a large
model), in the workbook's order, each with its sub-formulas of those shapes found once.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

from auditor.design.formula_filter import formulas_that_may_hold
from auditor.formula.syntax import Binary, Call, Node, RefNode, walk
from auditor.read.workbook import Workbook

CellKey = tuple[str, int, int]  # (sheet, row, column) as the parsed formulas are keyed
OperandKey = tuple[str, int, int]  # (sheet in lower case, row, column) of a one-cell operand
Candidate = tuple[CellKey, Node, list[Node]]  # a formula cell and its sub-formulas that may predict
PREDICTING = ("FORECAST", "FORECAST.LINEAR", "TREND")  # the calls that predict from a line


def may_predict(node: Node) -> bool:
    """Whether a sub-formula has a shape a prediction can take: a FORECAST or TREND call, a
    product or a quotient."""
    if isinstance(node, Call):
        return node.name in PREDICTING
    return isinstance(node, Binary) and node.op in ("*", "/")


def _operand(node: Node) -> OperandKey | None:
    """The cell a one-cell reference names (as prediction_refs.is_cell compares it)."""
    if isinstance(node, RefNode) and node.ref.is_cell:
        return (node.ref.sheet.lower(), node.ref.r1, node.ref.c1)
    return None


def _written(text: str) -> bool:
    """Whether formula text can hold a prediction's shape: a product, a quotient, a FORECAST or
    a TREND (a superset: the characters may sit in a text constant or a sheet name)."""
    upper = text.upper()
    return "*" in upper or "/" in upper or "FORECAST" in upper or "TREND" in upper


class PredictionCells:
    """The formula cells holding a sub-formula a prediction can be, with those sub-formulas,
    and for each one-cell factor of a product or divisor of a quotient the cells using it."""

    def __init__(self, parsed: Mapping[CellKey, Node], workbook: Workbook | None = None) -> None:
        self.cells: list[Candidate] = []
        self.calls: list[int] = []  # positions of the cells with a FORECAST or TREND call
        self.by_operand: dict[OperandKey, list[int]] = {}
        for key, node in formulas_that_may_hold(parsed, workbook, _written):
            shapes = [sub for sub in walk(node) if may_predict(sub)]
            if not shapes:
                continue
            position = len(self.cells)
            self.cells.append((key, node, shapes))
            if any(isinstance(sub, Call) for sub in shapes):
                self.calls.append(position)
            operands = {
                operand
                for sub in shapes
                if isinstance(sub, Binary)
                for operand in (_operand(sub.right), _operand(sub.left) if sub.op == "*" else None)
                if operand is not None
            }
            for operand in operands:
                self.by_operand.setdefault(operand, []).append(position)

    def for_slopes(self, slope_cells: Iterable[OperandKey]) -> list[Candidate]:
        """The cells that can predict from a regression with these slope cells, in order."""
        positions = set(self.calls)
        for cell in slope_cells:
            positions.update(self.by_operand.get(cell, ()))
        return [self.cells[i] for i in sorted(positions)]
