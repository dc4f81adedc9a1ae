"""Model lines and residual plots: whether a series' y cells are formulas of a line of x.

A series whose y cells are formulas of the x cell in their row and constants only is a *model
line* (the author's own line drawn again, R² = 1 by construction); one whose y cells subtract
such a line from a data cell is a *residual plot* (its trendline is flat by construction).
"""

from __future__ import annotations

from auditor.formula.syntax import Binary, Node, parse, references, walk
from auditor.read.workbook import Cell, Workbook

FORMULA_SAMPLE = 50  # y cells looked at to call a series a model line or residuals
FollowKey = tuple[str, int, int]


def formula_shape(
    workbook: Workbook, y_cells: list[FollowKey | None], x_cells: list[FollowKey | None]
) -> str:
    """ "line" when every sampled y cell is a line of x, "residual" when every one subtracts such
    a line from data, "" otherwise (data, or cells the sample cannot judge). The cells are those
    of the plotted points, in series order."""
    sample = [at for at in y_cells[:FORMULA_SAMPLE] if at is not None]
    if not all(_is_formula(workbook, at) for at in sample):
        return ""  # typed data: no need to look further
    x_keys = {_lower(at) for at in x_cells if at is not None}
    shapes: set[str] = set()
    for at in sample:
        shapes.add(_shape_of(workbook, _lower(at), x_keys, 0))
        if len(shapes) > 1:
            return ""
    return shapes.pop() if shapes and shapes <= {"line", "residual"} else ""


def _is_formula(workbook: Workbook, at: FollowKey) -> bool:
    cell = workbook.cell(*at)
    return cell is not None and cell.formula is not None


def _lower(at: FollowKey) -> FollowKey:
    return (at[0].lower(), at[1], at[2])


def _shape_of(workbook: Workbook, key: FollowKey, x_keys: set[FollowKey], depth: int) -> str:
    """ "line" (x of the row, constants and parameter cells only), "residual" (data minus a
    line), "data" otherwise."""
    cell = workbook.cell(key[0], key[1], key[2])
    if cell is None or cell.formula is None or depth > 3:
        return "data"
    node = _parsed(workbook, cell)
    if node is None:
        return "data"
    kinds: set[str] = set()
    for ref in references(node):
        if not ref.is_cell:
            return "data"  # a range (a sum, an average): not a line of one x
        ref_key = (ref.sheet.lower(), ref.r1, ref.c1)
        if ref_key in x_keys:
            kinds.add("x")
        elif ref_key[1] != key[1] and ref_key[2] != key[2]:
            kinds.add("parameter")  # a fixed cell off the series' row and column
        elif _shape_of(workbook, ref_key, x_keys, depth + 1) == "line":
            kinds.add("line")
        else:
            kinds.add("data")
    if not kinds & {"x", "line"}:
        return "data"
    if "data" not in kinds:
        return "line"
    return "residual" if "line" in kinds and _subtracts(node) else "data"


def _subtracts(node: Node) -> bool:
    return any(isinstance(n, Binary) and n.op == "-" for n in walk(node))


def _parsed(workbook: Workbook, cell: Cell) -> Node | None:
    try:
        return parse(cell.formula or "", cell.sheet, workbook)
    except Exception:  # noqa: BLE001 - an unreadable formula is reported elsewhere
        return None
