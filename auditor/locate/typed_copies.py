"""Typed copies of a slope inside formulas: ``=D3+2.316*F3`` beside a beta of 2.305.

People copy a slope they computed into the formulas that use it, as a typed number, and the two
then drift apart: the data change, or the copy was taken from another run. A number typed as a
coefficient (a factor of a product) in a formula on the regression's own rows, which reads the
regression's data (directly or through a cell of its row), and which lies within 1 % of a
reported slope, is taken as a typed copy of that slope: it is compared with the recomputed slope
at the precision it was typed to, like any typed figure.
"""

from __future__ import annotations

from auditor.formula.nodes import moved_from
from auditor.formula.syntax import Binary, Node, Number, Ref, references, walk
from auditor.locate.handbuilt_specs import attach
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.read.workbook import Cell, Workbook

Key = tuple[str, int, int]
NEAR = 0.01  # a copy within 1 % of the slope it was taken from (rounding, an older run)


def _factors(node: Node) -> list[float]:
    """Numbers typed as a factor of a product: 2.316 in ``D3+2.316*F3``."""
    out = []
    for sub in walk(node):
        if isinstance(sub, Binary) and sub.op == "*":
            for side in (sub.left, sub.right):
                if isinstance(side, Number):
                    value = float(side.value)
                    if value != int(value):  # whole numbers are counts and units, not slopes
                        out.append(value)
    return out


def _inside(ref: Ref, block: Ref) -> bool:
    return (
        ref.sheet.lower() == block.sheet.lower()
        and block.r1 <= ref.r1 <= block.r2
        and block.c1 <= ref.c1 <= block.c2
    )


def _reads_data(spec: RegressionSpec, node: Node, parsed: dict[Key, Node]) -> bool:
    """The formula reads a cell of x or y, itself or through one cell it references."""
    for ref in references(node):
        if _inside(ref, spec.x) or _inside(ref, spec.y):
            return True
        inner = parsed.get((ref.sheet, ref.r1, ref.c1)) if ref.is_cell else None
        if inner is not None and any(
            _inside(r, spec.x) or _inside(r, spec.y) for r in references(inner)
        ):
            return True
    return False


def _slope_values(spec: RegressionSpec, stored: bool) -> list[float]:
    """The reported slopes: stored values, or what a recogniser found the cell computes."""
    out = []
    for key, stat in spec.stats.items():
        value = stat.computes.get("value", stat.cell.value if stored else None)
        if key.split("@")[0] == "slope" and isinstance(value, float | int) and value:
            out.append(float(value))
    return out


def attach_typed_copies(
    workbook: Workbook, parsed: dict[Key, Node], specs: list[RegressionSpec]
) -> None:
    """Attach to each one-x regression the first cell typing each copy of its slope."""
    # The factors of each formula, found once for all specs; once for all the formulas moved
    # from one shared anchor (they differ in their references only: nodes.moved_from).
    cache: dict[object, list[float]] = {}
    formulas: list[tuple[str, Key, Node]] | None = None  # with each sheet's name lowered once
    for spec in specs:
        slopes = _slope_values(spec, workbook.stored_values)
        if spec.x_columns != 1 or spec.in_rows or not slopes:
            continue
        if formulas is None:
            formulas = [(key[0].lower(), key, node) for key, node in parsed.items()]
        seen: set[float] = set()
        y_sheet = spec.y.sheet.lower()
        for lowered, (sheet, row, col), node in formulas:
            if lowered != y_sheet or not spec.y.r1 <= row <= spec.y.r2:
                continue
            maker = moved_from(node) or (sheet, row, col)
            factors = cache.get(maker)
            if factors is None:
                factors = cache[maker] = _factors(node)
            copies = [
                f
                for f in factors
                if f not in seen and any(abs(f - s) <= NEAR * abs(s) for s in slopes)
            ]
            if not copies or not _reads_data(spec, node, parsed):
                continue
            seen.update(copies)
            source = workbook.cell(sheet, row, col)
            typed = Cell(sheet, row, col, copies[0], None, "General")
            stat = StatCell("slope", typed, "typed-in-formula")
            stat.computes = {"typed_in": source.formula or "" if source is not None else ""}
            attach(spec, "slope", stat)
