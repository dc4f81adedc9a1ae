"""What the workbook says around a regression that the design checks need.

The checks see plain data (a ``RegressionContext``), never the workbook; this module reads, once
per regression, the few things they need from it:

* the words near the result (for the claim: "Conclusion: no effect of humidity");
* a stated slope that matters ("Slope that matters: 0.05") or working range ("Working range:
  2 | 20"), typed in the cell right of (or below) its label;
* every prediction the workbook makes from this regression: ``FORECAST(x, y, x)``,
  ``TREND(y, x, new_x)``, a hand-built ``b0 + b1*x`` over the slope and intercept cells, or an
  inverse prediction ``(y - b0)/b1`` (a calibration reading), with the x it predicts at.

Wiring (auditor/audit.py): ``inputs = read_design_inputs(workbook, evaluator, spec, parsed)``,
passed to the checks as ``RegressionContext.design_inputs``.
"""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field

import numpy as np

from auditor.compare.precision import parse_text_number
from auditor.design.prediction_index import PredictionCells
from auditor.design.prediction_refs import cell_key, coord, is_cell, other_operand, refers_to
from auditor.design.window import TextCells
from auditor.errors import FormulaError
from auditor.evaluation.evaluator import Evaluator, Fault, Unsupported
from auditor.formula.syntax import Binary, Call, Node, RefNode, parse, walk
from auditor.locate.locator import RegressionSpec
from auditor.locate.spec import overlaps
from auditor.read.workbook import Cell, Workbook

WINDOW_ROWS = (6, 14)  # rows above the result block, rows below it
WINDOW_COLS = (6, 8)
MAX_PREDICTIONS = 10_000  # a whole column of fitted values is read, not a million rows

_MATTERS = re.compile(
    r"(slope|effect|change|difference)\s+(that\s+matters|of\s+interest|to\s+detect)|"
    r"(smallest|minimum|least)\s+(relevant|important|meaningful|detectable)\s+(slope|effect)|"
    r"relevant\s+slope",
    re.I,
)
_WORKING_RANGE = re.compile(
    r"(working|calibrat\w*|reporting|measuring)\s+range|range\s+of\s+use", re.I
)
_RANGE_TEXT = re.compile(r"^\s*(-?[\d.,]+)\s*(?:-|–|—|to|\.\.)\s*(-?[\d.,]+)")


@dataclass(frozen=True)
class Prediction:
    cell: str  # "Sheet!A1"
    x: float  # the x the line is used at
    how: str  # "FORECAST", "TREND", "b0 + b1·x", "(y − b0)/b1"
    shown: float | None = None  # the stored value of a cell that is the bare FORECAST/TREND call
    reads: tuple[str, str] | None = None  # (y, x) ranges that call fits


@dataclass
class DesignInputs:
    texts: list[tuple[str, str]] = field(default_factory=list)  # (text, cell), nearest first
    predictions: list[Prediction] = field(default_factory=list)
    slope_that_matters: float | None = None
    slope_that_matters_cell: str | None = None
    working_range: tuple[float, float] | None = None
    working_range_cell: str | None = None


def _numbers(value: object) -> list[float]:
    """Every finite number in an evaluated value (a scalar or a block)."""
    items = value.ravel().tolist() if isinstance(value, np.ndarray) else [value]
    out = []
    for item in items[:MAX_PREDICTIONS]:
        if isinstance(item, bool) or not isinstance(item, (int, float)):
            continue
        if np.isfinite(item):
            out.append(float(item))
    return out


class DesignInputReader:
    """Reads design inputs for each regression of one workbook (formulas parsed once)."""

    def __init__(
        self,
        workbook: Workbook,
        evaluator: Evaluator,
        parsed: Mapping[tuple[str, int, int], Node] | None = None,
    ) -> None:
        self.workbook = workbook
        self.evaluator = evaluator
        if parsed is None:
            parsed = {}
            for cell in workbook.formula_cells():
                try:
                    parsed[(cell.sheet, cell.row, cell.col)] = parse(
                        cell.formula or "", cell.sheet, workbook
                    )
                except FormulaError:
                    continue  # reported by the formula checks; nothing to predict from here
        self.parsed = parsed
        self._texts_by_row = TextCells(workbook)  # the words of each window, found by rows
        self._prediction_cells: PredictionCells | None = None  # made on first use

    def read(self, spec: RegressionSpec) -> DesignInputs:
        inputs = DesignInputs()
        anchors = [s.cell for s in spec.stats.values()] + [u.cell for u in spec.uses]
        if not anchors:
            anchors = [Cell(spec.y.sheet, spec.y.r1, spec.y.c2 + 1, None)]
        window = list(self._window(anchors))  # walked once, read twice
        inputs.texts = self._texts(window)
        self._stated_values(inputs, window)
        inputs.predictions = list(self._predictions(spec))
        return inputs

    # -- words and stated values -------------------------------------------------------------
    def _window(self, anchors: list[Cell]) -> Iterator[tuple[int, Cell]]:
        """Cells holding text around the result block on its sheet, nearest (to any anchor)
        first: the words and labels both readers of the window look for."""
        sheet = self.workbook.sheet(anchors[0].sheet)
        if sheet is None:
            return
        same = [a for a in anchors if a.sheet.lower() == sheet.name.lower()]
        r1 = min(a.row for a in same) - WINDOW_ROWS[0]
        r2 = max(a.row for a in same) + WINDOW_ROWS[1]
        c1 = min(a.col for a in same) - WINDOW_COLS[0]
        c2 = max(a.col for a in same) + WINDOW_COLS[1]
        inside = self._texts_by_row.inside(sheet, r1, c1, r2, c2)
        if not inside:
            return
        places = np.array([key for key, _ in inside], dtype=np.int64)
        corners = np.array([(a.row, a.col) for a in same], dtype=np.int64)
        # The distance to the nearest anchor (rows plus columns); by distance, row, column.
        distance = np.abs(places[:, None, :] - corners[None, :, :]).sum(axis=2).min(axis=1)
        for i in np.lexsort((places[:, 1], places[:, 0], distance)).tolist():
            yield int(distance[i]), inside[i][1]

    def _texts(self, window: list[tuple[int, Cell]]) -> list[tuple[str, str]]:
        return [
            (cell.value, cell.address)
            for _, cell in window
            if isinstance(cell.value, str) and not cell.formula and cell.value.strip()
        ]

    def _value_beside(self, label: Cell) -> tuple[object, Cell] | None:
        for dr, dc in ((0, 1), (0, 2), (1, 0)):
            cell = self.workbook.cell(label.sheet, label.row + dr, label.col + dc)
            if cell is not None and cell.value is not None:
                value = self.evaluator.cell_value(cell.sheet, cell.row, cell.col)
                return value, cell
        return None

    def _stated_values(self, inputs: DesignInputs, window: list[tuple[int, Cell]]) -> None:
        for _, cell in window:
            if not isinstance(cell.value, str) or cell.formula:
                continue
            if inputs.slope_that_matters is None and _MATTERS.search(cell.value):
                beside = self._value_beside(cell)
                if beside and isinstance(beside[0], (int, float)) and beside[0] != 0:
                    inputs.slope_that_matters = abs(float(beside[0]))
                    inputs.slope_that_matters_cell = beside[1].address
            if inputs.working_range is None and _WORKING_RANGE.search(cell.value):
                stated = self._range_beside(cell)
                if stated is not None:
                    inputs.working_range, inputs.working_range_cell = stated

    def _range_beside(self, label: Cell) -> tuple[tuple[float, float], str] | None:
        first = self.workbook.cell(label.sheet, label.row, label.col + 1)
        second = self.workbook.cell(label.sheet, label.row, label.col + 2)
        if first is None:
            return None
        low = self.evaluator.cell_value(first.sheet, first.row, first.col)
        if isinstance(low, str):
            match = _RANGE_TEXT.match(low)
            if match:
                a, b = parse_text_number(match.group(1)), parse_text_number(match.group(2))
                if a is not None and b is not None:
                    return (min(a, b), max(a, b)), first.address
            return None
        if second is None:
            return None
        high = self.evaluator.cell_value(second.sheet, second.row, second.col)
        ends = _numbers(np.array([low, high], dtype=object))
        if len(ends) == 2 and not any(isinstance(v, bool) for v in (low, high)):
            return (min(ends), max(ends)), first.address
        return None

    # -- predictions --------------------------------------------------------------------------
    def _evaluate(self, node: Node, sheet: str) -> list[float]:
        try:
            return _numbers(self.evaluator.evaluate(node, sheet))
        except (Unsupported, Fault, FormulaError, ArithmeticError, ValueError):
            return []  # a prediction whose x cannot be computed is not judged

    def _predictions(self, spec: RegressionSpec) -> Iterator[Prediction]:
        slope_cells = {
            cell_key(s.cell) for k, s in spec.stats.items() if k.split("@")[0] == "slope"
        }
        intercept_cells = {
            cell_key(s.cell) for k, s in spec.stats.items() if k.split("@")[0] == "intercept"
        }
        own = {cell_key(s.cell) for s in spec.stats.values()} | {
            cell_key(u.cell) for u in spec.uses
        }
        if self._prediction_cells is None:
            self._prediction_cells = PredictionCells(self.parsed, self.workbook)
        for key, node, shapes in self._prediction_cells.for_slopes(slope_cells):
            if (key[0].lower(), key[1], key[2]) in own:
                continue
            found = list(
                self._predictions_in(node, key[0], spec, slope_cells, intercept_cells, shapes)
            )
            if not found:
                continue
            address = f"{key[0]}!{coord(key[1], key[2])}"
            shown, reads = self._bare_call(key, node) if len(found) == 1 else (None, None)
            for x, how in found:
                yield Prediction(address, x, how, shown, reads)

    def _bare_call(
        self, key: tuple[str, int, int], node: Node
    ) -> tuple[float | None, tuple[str, str] | None]:
        """The value a FORECAST or TREND cell shows, and the ranges its line is fitted to."""
        if not isinstance(node, Call) or node.name not in ("FORECAST", "FORECAST.LINEAR", "TREND"):
            return None, None
        y_node, x_node = node.args[1:3] if node.name != "TREND" else node.args[0:2]
        cell = self.workbook.cell(*key)
        value = cell.value if cell is not None and self.workbook.stored_values else None
        if not isinstance(y_node, RefNode) or not isinstance(x_node, RefNode):
            return None, None
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            return None, None
        return float(value), (y_node.ref.address, x_node.ref.address)

    def _predictions_in(
        self,
        node: Node,
        sheet: str,
        spec: RegressionSpec,
        slope_cells: set[tuple[str, int, int]],
        intercept_cells: set[tuple[str, int, int]],
        shapes: list[Node] | None = None,
    ) -> Iterator[tuple[float, str]]:
        for sub in walk(node) if shapes is None else shapes:
            if isinstance(sub, Call) and sub.name in ("FORECAST", "FORECAST.LINEAR"):
                if len(sub.args) == 3 and self._known(sub.args[1], sub.args[2], spec):
                    for x in self._evaluate(sub.args[0], sheet):
                        yield x, "FORECAST"
            elif isinstance(sub, Call) and sub.name == "TREND" and len(sub.args) >= 3:
                if self._known(sub.args[0], sub.args[1], spec):
                    for x in self._evaluate(sub.args[2], sheet):
                        yield x, "TREND"
            elif isinstance(sub, Binary) and sub.op == "*" and intercept_cells:
                other = other_operand(sub, slope_cells)
                if other is not None and refers_to(node, intercept_cells):
                    for x in self._evaluate(other, sheet):
                        yield x, "b0 + b1·x"
            elif isinstance(sub, Binary) and sub.op == "/" and is_cell(sub.right, slope_cells):
                left = sub.left
                if isinstance(left, Binary) and left.op == "-":
                    own = isinstance(left.left, RefNode) and overlaps(left.left.ref, spec.y)
                    if is_cell(left.right, intercept_cells) and not own:  # not a read-back
                        for x in self._evaluate(sub, sheet):
                            yield x, "(y − b0)/b1"

    def _known(self, y_node: Node, x_node: Node, spec: RegressionSpec) -> bool:
        return (
            isinstance(y_node, RefNode)
            and isinstance(x_node, RefNode)
            and overlaps(y_node.ref, spec.y)
            and overlaps(x_node.ref, spec.x)
        )


def read_design_inputs(
    workbook: Workbook,
    evaluator: Evaluator,
    spec: RegressionSpec,
    parsed: Mapping[tuple[str, int, int], Node] | None = None,
) -> DesignInputs:
    """One regression's design inputs (build a DesignInputReader to share the parse)."""
    return DesignInputReader(workbook, evaluator, parsed).read(spec)
