"""Typed copies found by structure: formulas that draw a line m·x + c of a series' own x cell."""

from __future__ import annotations

from dataclasses import dataclass

from auditor.formula.syntax import Binary, Call, Node, Number, Ref, RefNode, Unary
from auditor.locate.spec import RegressionSpec
from auditor.locate.trendline_figures import FollowKey, TrendFigures, matches
from auditor.read.workbook import Cell, Workbook

CLOSE_SHARE = 0.1  # of y's span: how near an author's line of x must run to the trendline


@dataclass(frozen=True)
class Line:
    """A formula that is m·x + c of one x cell, with the literals that give m and c."""

    slope: float
    intercept: float
    slope_literal: float | None
    intercept_literal: float | None
    x_key: FollowKey | None


def _line(node: Node) -> Line | None:
    if isinstance(node, Number):
        value = float(node.value)
        return Line(0.0, value, None, value, None)
    if isinstance(node, RefNode):
        ref: Ref = node.ref
        if not ref.is_cell:
            return None
        return Line(1.0, 0.0, None, None, (ref.sheet.lower(), ref.r1, ref.c1))
    if isinstance(node, Unary) and node.op in ("-", "+"):
        inner = _line(node.operand)
        if inner is None or node.op == "+":
            return inner
        return Line(
            -inner.slope,
            -inner.intercept,
            None if inner.slope_literal is None else -inner.slope_literal,
            None if inner.intercept_literal is None else -inner.intercept_literal,
            inner.x_key,
        )
    if isinstance(node, Call) and node.name in ("", "PAREN") and len(node.args) == 1:
        return _line(node.args[0])
    if not isinstance(node, Binary):
        return None
    left, right = _line(node.left), _line(node.right)
    if left is None or right is None:
        return None
    if left.x_key and right.x_key and left.x_key != right.x_key:
        return None
    x_key = left.x_key or right.x_key
    if node.op in ("+", "-"):
        sign = -1.0 if node.op == "-" else 1.0
        return Line(
            left.slope + sign * right.slope,
            left.intercept + sign * right.intercept,
            _only(left.slope_literal, left.slope, right.slope_literal, right.slope, sign),
            _only(
                left.intercept_literal,
                left.intercept,
                right.intercept_literal,
                right.intercept,
                sign,
            ),
            x_key,
        )
    if node.op == "*":
        constant, other = (left, right) if left.slope == 0 else (right, left)
        if constant.slope != 0 or constant.x_key is not None:
            return None
        factor = constant.intercept
        plain_x = other.slope == 1.0 and other.intercept == 0.0 and other.x_key is not None
        return Line(
            factor * other.slope,
            factor * other.intercept,
            constant.intercept_literal if plain_x else None,
            None if other.intercept else 0.0,
            other.x_key,
        )
    return None


def _only(
    left_literal: float | None, left: float, right_literal: float | None, right: float, sign: float
) -> float | None:
    """The literal behind a sum's term when only one side contributes to it."""
    if right == 0:
        return left_literal
    if left == 0 and right_literal is not None:
        return sign * right_literal
    return None


def lines_of_one_cell(parsed: dict[FollowKey, Node]) -> dict[FollowKey, Line]:
    """Every formula that is m·x + c of one cell with m typed as a literal, by its cell."""
    found: dict[FollowKey, Line] = {}
    for key, node in parsed.items():
        line = _line(node)
        if line is not None and line.x_key is not None and line.slope_literal not in (None, 0):
            found[key] = line
    return found


def author_lines(
    workbook: Workbook, spec: RegressionSpec, lines: dict[FollowKey, Line], found: TrendFigures
) -> list[tuple[Cell, Line]]:
    """Formulas that draw a line of the series' own x cell close to the trendline."""
    use = spec.trendlines[0]
    if use.by_position:
        return []
    x_cells = {(p.x_at[0].lower(), p.x_at[1], p.x_at[2]) for p in use.used if p.x_at}
    copies: list[tuple[Cell, Line]] = []
    for key, line in lines.items():
        if line.x_key not in x_cells or not _copies_trendline(line, found):
            continue
        cell = workbook.cell(*key)
        previous = lines.get((key[0], key[1] - 1, key[2]))
        if previous is not None and (previous.slope, previous.intercept) == (
            line.slope,
            line.intercept,
        ):
            continue  # copied down: the first cell speaks for the block
        if cell is not None:
            copies.append((cell, line))
    return copies


def _copies_trendline(line: Line, found: TrendFigures) -> bool:
    """An author's line of x is taken for a copy of the trendline's equation when it runs close
    to it over the plotted x, or when it holds both figures and one of them agrees at its digits
    (one slipped digit must not hide the copy)."""
    gap = max(
        abs((line.slope - found.slope) * x + (line.intercept - found.intercept))
        for x in (found.x_low, found.x_high)
    )
    if gap <= CLOSE_SHARE * found.y_span:
        return True
    if line.slope_literal is None or line.intercept_literal is None:
        return False
    return matches(line.slope_literal, found.slope) or (
        line.intercept_literal != 0 and matches(line.intercept_literal, found.intercept)
    )
