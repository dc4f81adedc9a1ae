"""What a calibration workbook computes from its curve, found by what the formulas compute.

For one regression (its slope and intercept cells, or SLOPE/INTERCEPT/INDEX(LINEST) calls over its
ranges) this module finds every formula of the shape (y − b0)/b1:

* where y is a standard's own response (a cell of the regression's y range), a **read-back**: the
  standard's concentration back-calculated; cells that take it and the standard's nominal x and
  give the % deviation or the recovery are found beside it, classified by reproduction;
* elsewhere, a **sample result**: its response (a cell, or AVERAGE over m replicate readings), the
  dilution factor it is multiplied by, and the value the author shows;
* the **tests the author claims** of a coefficient against a target are found over the same
  reader by :mod:`auditor.locate.calibration_targets`.

Only these modules and :mod:`auditor.locate.calibration_labels` read the workbook for the
calibration checks; the checks see the plain records they return.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

import numpy as np

from auditor.errors import FormulaError
from auditor.evaluation.evaluator import Evaluator, Fault, RangeValue, Unsupported
from auditor.formula.syntax import Binary, Call, Node, Number, RefNode, walk
from auditor.grid import column_letter
from auditor.locate.spec import RegressionSpec, overlaps
from auditor.read.workbook import Cell, Workbook

CellKey = tuple[str, int, int]  # (sheet lower-cased, row, col)
MAX_FORMULAS = 200_000  # a workbook with more formulas is not searched for read-offs


@dataclass(frozen=True)
class ReadBack:
    """An author's cell computed from one standard's response."""

    cell: str
    row: int  # the standard's row in the data table
    kind: str  # "concentration" | "deviation %" | "recovery %" | "deviation" | "recovery"
    reported: float


@dataclass(frozen=True)
class SampleReading:
    cell: str
    response: float  # the mean response the formula reads
    replicates: int  # m: readings averaged (1 for a single cell)
    dilution: float
    reported: float | None  # the value the author sees (stored or evaluated)
    formula: str


def _key(cell: Cell) -> CellKey:
    return (cell.sheet.lower(), cell.row, cell.col)


def cell_address(key: tuple[str, int, int], workbook: Workbook) -> str:
    """A cell key as the address a reader sees (the sheet's own spelling)."""
    sheet = workbook.sheet(key[0])
    name = sheet.name if sheet is not None else key[0]
    return f"{name}!{column_letter(key[2])}{key[1]}"


def _number(value: object) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    return float(value) if math.isfinite(value) else None


class CurveReader:
    """Reads the cells of one regression: its coefficients, read-backs and sample results."""

    def __init__(
        self,
        workbook: Workbook,
        evaluator: Evaluator,
        spec: RegressionSpec,
        parsed: Mapping[tuple[str, int, int], Node],
    ) -> None:
        self.workbook, self.evaluator, self.spec = workbook, evaluator, spec
        self.parsed = parsed if len(parsed) <= MAX_FORMULAS else {}
        self.cells: dict[str, set[CellKey]] = {}
        for key, stat in spec.stats.items():
            self.cells.setdefault(key.split("@")[0], set()).add(_key(stat.cell))

    # -- values ---------------------------------------------------------------------------------
    def value_of(self, key: tuple[str, int, int]) -> float | None:
        """What the author sees in a cell: its stored value, else the evaluated formula."""
        cell = self.workbook.cell(*key)
        if cell is None:
            return None
        stored = _number(cell.value)
        if stored is not None and (self.workbook.stored_values or not cell.formula):
            return stored
        try:
            return _number(self.evaluator.cell_value(cell.sheet, cell.row, cell.col))
        except (Unsupported, Fault, FormulaError, ArithmeticError, ValueError):
            return None

    def _evaluate(self, node: Node, sheet: str) -> object:
        try:
            return self.evaluator.evaluate(node, sheet)
        except (Unsupported, Fault, FormulaError, ArithmeticError, ValueError):
            return None

    # -- the coefficients ------------------------------------------------------------------------
    def coefficient(self, node: Node) -> str | None:
        """'slope' or 'intercept' when a node reads this regression's coefficient."""
        if isinstance(node, RefNode) and node.ref.is_cell:
            key = (node.ref.sheet.lower(), node.ref.r1, node.ref.c1)
            for name in ("slope", "intercept"):
                if key in self.cells.get(name, set()):
                    return name
            return None
        if isinstance(node, Call) and node.name in ("SLOPE", "INTERCEPT") and len(node.args) == 2:
            if self._pair(node.args[0], node.args[1]):
                return node.name.lower()
        if isinstance(node, Call) and node.name == "INDEX" and len(node.args) >= 3:
            inner, row, col = node.args[0], node.args[1], node.args[2]
            if (
                isinstance(inner, Call)
                and inner.name == "LINEST"
                and len(inner.args) >= 2
                and self._pair(inner.args[0], inner.args[1])
                and isinstance(row, Number)
                and float(row.value) == 1
                and isinstance(col, Number)
            ):
                return {1.0: "slope", 2.0: "intercept"}.get(float(col.value))
        return None

    def _pair(self, y: Node, x: Node) -> bool:
        return (
            isinstance(y, RefNode)
            and isinstance(x, RefNode)
            and overlaps(y.ref, self.spec.y)
            and overlaps(x.ref, self.spec.x)
        )

    def _inverse(self, node: Node) -> tuple[Node, Node | None] | None:
        """The response node of (y − b0)/b1, when ``node`` is that division, and the factor
        written inside the division (F·(y − b0)/b1 parses as (F·(y − b0))/b1), if any."""
        if not (isinstance(node, Binary) and node.op == "/"):
            return None
        if self.coefficient(node.right) != "slope":
            return None
        left = node.left
        if self._difference(left):
            assert isinstance(left, Binary)
            return left.left, None
        if isinstance(left, Binary) and left.op == "*":
            if self._difference(left.right):
                assert isinstance(left.right, Binary)
                return left.right.left, left.left
            if self._difference(left.left):
                assert isinstance(left.left, Binary)
                return left.left.left, left.right
        return None

    def _difference(self, node: Node) -> bool:
        """y − b0 with b0 this regression's intercept."""
        return (
            isinstance(node, Binary)
            and node.op == "-"
            and self.coefficient(node.right) == "intercept"
        )

    # -- read-backs and samples ------------------------------------------------------------------
    def readings(self) -> tuple[list[ReadBack], list[SampleReading]]:
        own = {k for keys in self.cells.values() for k in keys}
        read_backs: list[ReadBack] = []
        samples: list[SampleReading] = []
        for key, node in self.parsed.items():
            lowered = (key[0].lower(), key[1], key[2])
            if lowered in own:
                continue
            found = self._reading(lowered, node)
            if isinstance(found, ReadBack):
                read_backs.append(found)
            elif isinstance(found, SampleReading):
                samples.append(found)
        read_backs.extend(self._deviations(read_backs))
        return read_backs, samples

    def _reading(self, key: CellKey, node: Node) -> ReadBack | SampleReading | None:
        top: Node = node
        dilution_node: Node | None = None
        if isinstance(top, Call) and top.name == "ROUND" and top.args:
            top = top.args[0]
        if isinstance(top, Binary) and top.op == "*":
            product = top
            if self._inverse(product.left) is not None:
                top, dilution_node = product.left, product.right
            elif self._inverse(product.right) is not None:
                top, dilution_node = product.right, product.left
        inverse = self._inverse(top)
        if inverse is None:
            return None
        response, inner_factor = inverse
        if inner_factor is not None:
            if dilution_node is not None:
                return None  # two factors: not a plain read-off
            dilution_node = inner_factor
        address = cell_address(key, self.workbook)
        reported = self.value_of(key)
        y = self.spec.y
        if (
            isinstance(response, RefNode)
            and response.ref.is_cell
            and overlaps(response.ref, y)
            and dilution_node is None
        ):
            if reported is None:
                return None
            return ReadBack(address, response.ref.r1, "concentration", reported)
        mean, count = self._response(response, key[0])
        dilution = 1.0
        if dilution_node is not None:
            factor = _number(self._evaluate(dilution_node, key[0]))
            if factor is None or factor == 0:
                return None
            dilution = factor
        if mean is None:
            return None
        cell = self.workbook.cell(*key)
        return SampleReading(
            address, mean, count, dilution, reported, cell.formula or "" if cell else ""
        )

    def _response(self, node: Node, sheet: str) -> tuple[float | None, int]:
        """The mean response and the number of readings averaged (m)."""
        if isinstance(node, Call) and node.name == "AVERAGE":
            values: list[float] = []
            for arg in node.args:
                got = self._evaluate(arg, sheet)
                items = got.ravel().tolist() if isinstance(got, np.ndarray) else [got]
                if isinstance(got, RangeValue):
                    items = got.values.ravel().tolist()
                values.extend(v for v in map(_number, items) if v is not None)
            return (float(np.mean(values)), len(values)) if values else (None, 0)
        return _number(self._evaluate(node, sheet)), 1

    def _deviations(self, read_backs: list[ReadBack]) -> Iterator[ReadBack]:
        """Cells that take a read-back and the standard's nominal x (same row) and give its
        deviation or recovery, classified by what they reproduce."""
        by_key = {_address_key(rb.cell): rb for rb in read_backs}
        x = self.spec.x
        for key, node in self.parsed.items():
            refs = [n.ref for n in walk(node) if isinstance(n, RefNode) and n.ref.is_cell]
            keys = [(r.sheet.lower(), r.r1, r.c1) for r in refs]
            back = next((by_key[k] for k in keys if k in by_key), None)
            if back is None:
                continue
            nominal_key = next(
                (k for k, r in zip(keys, refs, strict=True) if overlaps(r, x) and r.r1 == back.row),
                None,
            )
            reported = self.value_of((key[0].lower(), key[1], key[2]))
            nominal = self.value_of(nominal_key) if nominal_key is not None else None
            if reported is None or not nominal:
                continue
            kind = _deviation_kind(reported, back.reported, nominal)
            if kind is not None:
                yield ReadBack(cell_address(key, self.workbook), back.row, kind, reported)


def _address_key(address: str) -> CellKey:
    sheet, _, coord = address.rpartition("!")
    letters = coord.rstrip("0123456789")
    col = 0
    for letter in letters.upper():
        col = col * 26 + ord(letter) - 64
    return (sheet.lower(), int(coord[len(letters) :]), col)


def _deviation_kind(value: float, back: float, nominal: float) -> str | None:
    candidates = {
        "deviation %": (back - nominal) / nominal * 100,
        "recovery %": back / nominal * 100,
        "deviation": (back - nominal) / nominal,
        "recovery": back / nominal,
    }
    for kind, expected in candidates.items():
        if abs(value - expected) <= 1e-6 * max(abs(expected), 1e-3):
            return kind
    return None
