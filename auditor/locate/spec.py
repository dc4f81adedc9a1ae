"""The located regression: its ranges, its statistic cells and the calls that name its data."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from auditor.formula.syntax import Call, Node, Number, Ref, RefNode, calls
from auditor.locate.pasted_data import PastedOrigin
from auditor.model import FoundBy
from auditor.read.workbook import Cell, Workbook

PAIR_FUNCS = {"SLOPE", "INTERCEPT", "STEYX", "RSQ", "CORREL", "PEARSON", "LINEST"}
MAX_FOLLOW_ROUNDS = 4


@dataclass
class StatCell:
    key: str
    cell: Cell
    how: str  # "formula", "linest-block", "name", "binding", "label", "chain" (a typed input)
    block_position: tuple[int, int] | None = None  # (row, col) inside an array block
    label: str = ""  # the author's words beside the cell ("t (analyte)")
    column_header: str = ""  # for a LINEST block cell: the text above its column of the block
    typed_value: float | None = None  # a constant typed inside the cell's formula (=1.49*B2+2.1)
    computes: dict[str, Any] = field(default_factory=dict)  # what a recogniser found it computes


@dataclass
class PairUse:
    """One call that names a (y, x) pair: which cell, which function, which ranges."""

    cell: Cell
    function: str
    y: Ref
    x: Ref
    intercept: bool = True


@dataclass
class RegressionSpec:
    id: str
    sheet: str
    x: Ref
    y: Ref
    intercept: bool
    found_by: FoundBy
    stats: dict[str, StatCell] = field(default_factory=dict)
    uses: list[PairUse] = field(default_factory=list)
    label: str = ""

    x_headers: list[str] = field(default_factory=list)  # header text of each x column
    # Chart series whose trendline fits this regression (trendline_series.TrendlineUse)
    trendlines: list[Any] = field(default_factory=list)
    range_texts: tuple[str, str] | None = None  # x and y ranges in words, when not plain blocks
    # The x and y ranges of the other regressions of the workbook: rows they hold are theirs,
    # never an extension of this one's table.
    neighbour_ranges: list[Ref] = field(default_factory=list)
    pasted: PastedOrigin | None = None  # the pasted table this regression was read from
    typed: Any = None  # the typed statistic table it was read from (typed_spec.TypedOrigin)

    @property
    def in_rows(self) -> bool:
        """Data laid out in rows: x in one row, y in another of the same length."""
        return self.x.rows == 1 and self.y.rows == 1 and self.x.cols == self.y.cols > 1

    @property
    def x_columns(self) -> int:
        if self.pasted is not None:
            return self.pasted.table.k  # its data may lie in rows
        if self.in_rows:
            return 1
        return self.x.c2 - self.x.c1 + 1


def overlaps(a: Ref, b: Ref) -> bool:
    return (
        a.sheet.lower() == b.sheet.lower()
        and a.r1 <= b.r2
        and b.r1 <= a.r2
        and a.c1 <= b.c2
        and b.c1 <= a.c2
    )


def ref_arg(node: Node) -> Ref | None:
    return node.ref if isinstance(node, RefNode) else None


def _const_arg(node: Node | None) -> bool:
    """LINEST's const argument: FALSE (or 0) fits through the origin."""
    from auditor.formula.syntax import Bool, Number

    if node is None:
        return True
    if isinstance(node, Bool):
        return bool(node.value)
    if isinstance(node, Number):
        return float(node.value) != 0
    if isinstance(node, Call) and node.name in ("TRUE", "FALSE"):
        return node.name == "TRUE"
    return True


def pair_uses(cell: Cell, node: Node) -> list[PairUse]:
    found = []
    for call in calls(node):
        if call.name not in PAIR_FUNCS or len(call.args) < 2:
            continue
        y, x = ref_arg(call.args[0]), ref_arg(call.args[1])
        if y is None or x is None or y.external or x.external:
            continue
        intercept = (
            _const_arg(call.args[2]) if call.name == "LINEST" and len(call.args) > 2 else True
        )
        found.append(PairUse(cell, call.name, y, x, intercept))
    return found


def label_for(workbook: Workbook, cell: Cell) -> str | None:
    """The text an author put beside a cell: nearest text to the left (3 cells), else above."""
    sheet = workbook.sheet(cell.sheet)
    if sheet is None:
        return None
    for dc in range(1, 4):
        if cell.col - dc < 1:
            break
        other = sheet.get(cell.row, cell.col - dc)
        if other is not None and other.value is not None:
            if isinstance(other.value, str) and not other.formula:
                return other.value
            break
    other = sheet.get(cell.row - 1, cell.col) if cell.row > 1 else None
    if other is not None and isinstance(other.value, str) and not other.formula:
        return other.value
    return None


def literal_int(node: Node) -> int | None:
    return int(float(node.value)) if isinstance(node, Number) else None
