"""Typed copies of a trendline's figures: the numbers an author read off the chart's label and
typed into cells or into formulas (``=(1.49*$B2)+21.9``, ``=(C2-21.9)/1.49``).

A chart label is no cell, so these copies are the trendline's only reported values. They are
recognised by what they are, not by how they are spelt:

* **by value**: a constant (typed in a cell, or a literal inside a formula, with the sign the
  formula gives it) that equals the trendline's slope, intercept or R² at the digits it shows.
  A label is only read when the chart shows it (the equation for slope and intercept, R² for
  R²), and coincidence is kept out by digits: a constant alone needs four significant digits,
  two constants of one formula matching slope and intercept need three each;
* **by structure**: a formula that is a straight line of the series' own x cell
  (``m·x + c``) close to the trendline (within a tenth of y's span over the plotted x) is the
  author's copy of that trendline's equation even when a digit is wrong: its constants are
  attached as the reported slope and intercept, so a wrong digit is judged, not missed.

A formula copied down a column (or across a row) is taken at its first cell only. Constants
inside a chart series or a regression's data ranges are data, never copies.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterator
from dataclasses import dataclass

from auditor.compare.precision import agree_typed
from auditor.formula.syntax import Binary, Call, Node, Number, Ref, RefNode, Unary, children
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.read.workbook import Cell, Workbook

MIN_DIGITS_ALONE = 4
MIN_DIGITS_PAIRED = 3
CLOSE_SHARE = 0.1  # of y's span: how near an author's line of x must run to the trendline
DATA_RUN = 5  # numbers stacked this deep in a column are data, not a typed figure
FollowKey = tuple[str, int, int]


@dataclass(frozen=True)
class Literal:
    cell: Cell
    typed: float  # as typed
    value: float  # with the sign the formula gives it (the same for a constant in a cell)
    in_formula: bool


@dataclass(frozen=True)
class TrendFigures:
    """What the chart's label shows for one series, computed from the plotted points."""

    slope: float
    intercept: float
    r_squared: float | None
    y_span: float
    x_low: float
    x_high: float


def significant_digits(value: float) -> int:
    """Digits a typed constant carries: 21.914 → 5, 0.047 → 2, 2000 → 1."""
    mantissa = repr(abs(value)).partition("e")[0]
    whole, _, fraction = mantissa.partition(".")
    if fraction == "0":
        fraction = ""
    digits = (whole + fraction).lstrip("0")
    return len(digits if fraction else digits.rstrip("0"))


def figures(xs: list[float], ys: list[float], intercept: bool) -> TrendFigures | None:
    """Least-squares slope, intercept and R² of the plotted points (closed form)."""
    n = len(xs)
    if n < 2:
        return None
    if intercept:
        x_mean, y_mean = sum(xs) / n, sum(ys) / n
        sxx = sum((x - x_mean) ** 2 for x in xs)
        if sxx == 0:
            return None
        slope = sum((x - x_mean) * (y - y_mean) for x, y in zip(xs, ys, strict=True)) / sxx
        b0 = y_mean - slope * x_mean
        total = sum((y - y_mean) ** 2 for y in ys)
    else:
        sxx = sum(x * x for x in xs)
        if sxx == 0:
            return None
        slope = sum(x * y for x, y in zip(xs, ys, strict=True)) / sxx
        b0 = 0.0
        total = sum(y * y for y in ys)
    residual = sum((y - b0 - slope * x) ** 2 for x, y in zip(xs, ys, strict=True))
    r_squared = 1.0 - residual / total if total > 0 else None
    return TrendFigures(slope, b0, r_squared, max(ys) - min(ys), min(xs), max(xs))


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


@dataclass(frozen=True)
class _Line:
    """A formula that is m·x + c of one x cell, with the literals that give m and c."""

    slope: float
    intercept: float
    slope_literal: float | None
    intercept_literal: float | None
    x_key: FollowKey | None


def _line(node: Node) -> _Line | None:
    if isinstance(node, Number):
        value = float(node.value)
        return _Line(0.0, value, None, value, None)
    if isinstance(node, RefNode):
        ref: Ref = node.ref
        if not ref.is_cell:
            return None
        return _Line(1.0, 0.0, None, None, (ref.sheet.lower(), ref.r1, ref.c1))
    if isinstance(node, Unary) and node.op in ("-", "+"):
        inner = _line(node.operand)
        if inner is None or node.op == "+":
            return inner
        return _Line(
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
        return _Line(
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
        return _Line(
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


def _literals(
    workbook: Workbook, parsed: dict[FollowKey, Node], data_cells: set[FollowKey]
) -> list[Literal]:
    """Constants typed in cells (outside the data) and number literals inside formulas."""
    found: list[Literal] = []
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
            if node is None or _continues_copy(workbook, parsed, cell, node):
                continue
            found.extend(Literal(cell, typed, value, True) for typed, value in _signed(node, 1.0))
    return found


def _in_data_run(workbook: Workbook, cell: Cell) -> bool:
    sheet = workbook.sheet(cell.sheet)
    assert sheet is not None

    def numeric(row: int) -> bool:
        other = sheet.get(row, cell.col)
        return other is not None and other.formula is None and _plain_number(other.value)

    depth, row = 1, cell.row - 1
    while row >= 1 and numeric(row) and depth < DATA_RUN:
        depth, row = depth + 1, row - 1
    row = cell.row + 1
    while numeric(row) and depth < DATA_RUN:
        depth, row = depth + 1, row + 1
    return depth >= DATA_RUN


def _plain_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _continues_copy(
    workbook: Workbook, parsed: dict[FollowKey, Node], cell: Cell, node: Node
) -> bool:
    """The formula repeats the literals of the cell above (or to the left): a copied block."""
    mine = tuple(_signed(node, 1.0))
    if not mine:
        return True
    for row, col in ((cell.row - 1, cell.col), (cell.row, cell.col - 1)):
        other = parsed.get((cell.sheet, row, col))
        if other is not None and tuple(_signed(other, 1.0)) == mine:
            return True
    return False


def _series_cells(specs: list[RegressionSpec]) -> set[FollowKey]:
    """Cells of every chart series and regression range: data, never a typed figure."""
    cells: set[FollowKey] = set()
    blocks: list[Ref] = []
    for spec in specs:
        blocks.extend([spec.x, spec.y])
        for use in spec.trendlines:
            blocks.extend(r for r in (use.x_ref, use.y_ref) if r is not None)
    for block in blocks:
        if block.rows * block.cols > 1_000_000:
            continue
        cells.update(
            (block.sheet.lower(), r, c)
            for r in range(block.r1, block.r2 + 1)
            for c in range(block.c1, block.c2 + 1)
        )
    return cells


def _shown_figures(spec: RegressionSpec) -> tuple[TrendFigures | None, set[str]]:
    """The trendline's figures and which of them its label shows."""
    shown: set[str] = set()
    for use in spec.trendlines:
        if "equation" in use.shows:
            shown.update({"slope", "intercept"} if spec.intercept else {"slope"})
        if "r_squared" in use.shows and spec.intercept:
            shown.add("r_squared")
    xs, ys = spec.trendlines[0].pairs()
    found = figures(xs, ys, spec.intercept)
    return found, shown


def _put(spec: RegressionSpec, key: str, cell: Cell, value: float) -> None:
    if any(s.cell.address == cell.address and s.key == key for s in spec.stats.values()):
        return
    name = key if key not in spec.stats else f"{key}@{cell.address}"
    stat = StatCell(key, cell, "trendline-copy")
    if cell.formula is not None or isinstance(cell.value, str):
        stat.typed_value = value  # a number inside a formula or a text, not the cell's value
    spec.stats[name] = stat


def _matches(value: float, true: float | None) -> bool:
    if true is None:
        return False
    return bool(agree_typed(value, true).agrees)


def attach_copies(
    workbook: Workbook, specs: list[RegressionSpec], parsed: dict[FollowKey, Node]
) -> None:
    """Attach to every trendline regression the typed copies of the figures its chart shows."""
    targets = [spec for spec in specs if spec.trendlines]
    if not targets:
        return
    data_cells = _series_cells(specs)
    literals = _literals(workbook, parsed, data_cells)
    equations = _equation_texts(workbook)
    one_cell_lines = _lines_of_one_cell(parsed)
    for spec in targets:
        found, shown = _shown_figures(spec)
        if found is None or not shown:
            continue
        lines = _author_lines(workbook, spec, one_cell_lines, found) if "slope" in shown else []
        taken = {cell.address for cell, _ in lines}
        for cell, line in lines:
            if line.slope_literal is not None:
                _put(spec, "slope", cell, line.slope_literal)
            if line.intercept_literal is not None and "intercept" in shown:
                _put(spec, "intercept", cell, line.intercept_literal)
        for cell, figures_typed in equations:
            _attach_equation(spec, cell, figures_typed, found, shown)
        _attach_by_value(workbook, spec, literals, found, shown, taken)


def _attach_by_value(
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
                if _matches(value, truth[key]):
                    by_cell.setdefault(literal.cell.address, []).append((key, literal.cell, value))
                    break
    for matched in by_cell.values():
        first = matched[0][1]
        if first.formula is None and _plain_number(first.value) and _in_data_run(workbook, first):
            continue  # a number in a column of data that happens to agree
        keys = {key for key, _, _ in matched}
        needed = MIN_DIGITS_PAIRED if len(keys) > 1 else MIN_DIGITS_ALONE
        for key, cell, value in matched:
            if significant_digits(value) >= needed:
                _put(spec, key, cell, value)


def _lines_of_one_cell(parsed: dict[FollowKey, Node]) -> dict[FollowKey, _Line]:
    """Every formula that is m·x + c of one cell with m typed as a literal, by its cell."""
    found: dict[FollowKey, _Line] = {}
    for key, node in parsed.items():
        line = _line(node)
        if line is not None and line.x_key is not None and line.slope_literal not in (None, 0):
            found[key] = line
    return found


def _author_lines(
    workbook: Workbook, spec: RegressionSpec, lines: dict[FollowKey, _Line], found: TrendFigures
) -> list[tuple[Cell, _Line]]:
    """Formulas that draw a line of the series' own x cell close to the trendline."""
    use = spec.trendlines[0]
    if use.by_position:
        return []
    x_cells = {(p.x_at[0].lower(), p.x_at[1], p.x_at[2]) for p in use.used if p.x_at}
    copies: list[tuple[Cell, _Line]] = []
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


def _copies_trendline(line: _Line, found: TrendFigures) -> bool:
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
    return _matches(line.slope_literal, found.slope) or (
        line.intercept_literal != 0 and _matches(line.intercept_literal, found.intercept)
    )


NUMBER_TEXT = r"[-\u2212]?\s*\d[\d,]*(?:\.\d+)?(?:[eE][-+]?\d+)?"
EQUATION = re.compile(
    rf"\by\s*=\s*(?P<slope>{NUMBER_TEXT})\s*\*?\s*x\b(?:\s*(?P<sign>[-+\u2212])\s*"
    rf"(?P<intercept>\d[\d,]*(?:\.\d+)?(?:[eE][-+]?\d+)?))?",
    re.I,
)
R_SQUARED = re.compile(rf"\bR\s*(?:\u00b2|\^?2)\s*=\s*(?P<r2>{NUMBER_TEXT})", re.I)


def _text_number(text: str) -> float:
    return float(text.replace("\u2212", "-").replace(",", "").replace(" ", ""))


def _equation_texts(workbook: Workbook) -> list[tuple[Cell, dict[str, float]]]:
    """Text cells holding a trendline label copied as text: "y = 1.49x + 21.9", "R² = 0.88"."""
    found: list[tuple[Cell, dict[str, float]]] = []
    for sheet in workbook.sheets.values():
        for cell in sheet.cells.values():
            if cell.formula is not None or not isinstance(cell.value, str) or "=" not in cell.value:
                continue
            typed: dict[str, float] = {}
            equation = EQUATION.search(cell.value)
            if equation:
                typed["slope"] = _text_number(equation.group("slope"))
                if equation.group("intercept"):
                    sign = -1.0 if equation.group("sign") in ("-", "\u2212") else 1.0
                    typed["intercept"] = sign * _text_number(equation.group("intercept"))
            r_squared = R_SQUARED.search(cell.value)
            if r_squared:
                typed["r_squared"] = _text_number(r_squared.group("r2"))
            if typed:
                found.append((cell, typed))
    return found


def _attach_equation(
    spec: RegressionSpec,
    cell: Cell,
    typed: dict[str, float],
    found: TrendFigures,
    shown: set[str],
) -> None:
    """A label copied as text belongs to the trendline when one of its figures agrees at its
    digits (four significant digits at least, or two figures); then every figure it holds is a
    reported value, so a wrong one is judged."""
    truth = {"slope": found.slope, "intercept": found.intercept, "r_squared": found.r_squared}
    keys = [key for key in typed if key in shown]
    agreeing = [key for key in keys if _matches(typed[key], truth[key])]
    needed = MIN_DIGITS_PAIRED if len(agreeing) > 1 else MIN_DIGITS_ALONE
    if not any(significant_digits(typed[key]) >= needed for key in agreeing):
        return
    for key in keys:
        _put(spec, key, cell, typed[key])
