"""Which range of a hand-built regression is x, when its slope cell and the cells built on it
disagree.

A hand-built slope names x by what it divides by (COVARIANCE.S(x, y)/VAR.S(x)); the cells built
on it name x by what they multiply the slope by: the intercept ȳ − b·x̄, the fitted values in a
residual sum of squares SUMXMY2(y, b0 + b·x). When the slope divides by one range and at least
two other cells multiply it by the other, and none by the first, the slope is the odd one out —
its arguments swapped, as the design's xy-swapped says — and the regression is the one the rest
of the block computes: its x and y are turned, and the slope's own call, still naming them the
other way round, is judged as swapped.
"""

from __future__ import annotations

from auditor.formula.syntax import Binary, Node, Ref, RefNode, references, walk
from auditor.locate.spec import RegressionSpec, overlaps
from auditor.model import stat_base

MIN_VOTES = 2  # cells that must multiply the slope by the other range


def _slope_cells(spec: RegressionSpec) -> set[tuple[str, int, int]]:
    return {
        (s.cell.sheet.lower(), s.cell.row, s.cell.col)
        for k, s in spec.stats.items()
        if stat_base(k) == "slope"
    }


def _is_slope(node: Node, slopes: set[tuple[str, int, int]]) -> bool:
    return (
        isinstance(node, RefNode)
        and node.ref.is_cell
        and (node.ref.sheet.lower(), node.ref.r1, node.ref.c1) in slopes
    )


def _multiplied(node: Node, slopes: set[tuple[str, int, int]]) -> list[Ref]:
    """The ranges a formula multiplies a slope cell by (b*AVERAGE(x), b*x)."""
    found: list[Ref] = []
    for sub in walk(node):
        if not (isinstance(sub, Binary) and sub.op == "*"):
            continue
        for mine, other in ((sub.left, sub.right), (sub.right, sub.left)):
            if _is_slope(mine, slopes):
                found.extend(r for r in references(other) if not r.is_cell)
    return found


def turn_if_swapped(spec: RegressionSpec, parsed: dict[tuple[str, int, int], Node]) -> bool:
    """Turn x and y of a hand-built regression whose other cells all say the slope has them
    the wrong way round (see the module's words). True when turned."""
    slopes = _slope_cells(spec)
    if spec.found_by != "hand-built" or not slopes or spec.x_columns != 1:
        return False
    votes_x = votes_y = 0
    for key, stat in spec.stats.items():
        if stat_base(key) == "slope":
            continue
        node = parsed.get((stat.cell.sheet, stat.cell.row, stat.cell.col))
        if node is None:
            continue
        ranges = _multiplied(node, slopes)
        votes_x += any(overlaps(r, spec.x) for r in ranges)
        votes_y += any(overlaps(r, spec.y) for r in ranges)
    if votes_y >= MIN_VOTES and votes_x == 0:
        spec.x, spec.y = spec.y, spec.x
        return True
    return False
