"""Chart series with trendlines read as the chart fits them: points, paired lengths and status.

What a trendline fits is what the chart plots:

* a scatter (or bubble) series pairs its x and y values by position; when the two references
  differ in length only the first min(n_x, n_y) positions pair up (LibreOffice draws and fits
  those and leaves the rest out: checked by rendering a chart whose y range is longer), and the
  mismatch is a finding of its own (``auditor.checks.trendlines``);
* a line, bar, column or area series, or a scatter series whose x values are text, is plotted
  against the positions 1..n: its trendline fits y against 1..n (common practice for the
  spreadsheet the studied workbooks come from; LibreOffice's rendering agrees for text
  categories, but fits evenly spaced dates on a date axis as values, which the
  ``trendline-fits-positions`` note spells out). The regression keeps the category range as its
  x range and says it fits positions;
* a point whose y (or, in a scatter, x) is empty, text or an error is not drawn and not fitted.

Not every linear trendline is a regression of data: model lines and residual plots
(:mod:`auditor.locate.trendline_shapes`), series with fewer than three points, and every
non-linear trendline (polynomial, exponential, logarithmic, power, moving average) are listed
as not audited, with why, instead of becoming a regression.
"""

from __future__ import annotations

import math
import weakref
from dataclasses import dataclass, field
from typing import Any

from auditor.errors import FormulaError
from auditor.evaluation.evaluator import Evaluator, Unsupported
from auditor.formula.syntax import Ref, RefNode, parse
from auditor.locate.trendline_shapes import FollowKey, formula_shape
from auditor.read.charts import Chart, ChartSeries, SeriesValues, Trendline
from auditor.read.workbook import Cell, Workbook

MIN_POINTS = 3


@dataclass(slots=True)
class SeriesPoint:
    position: int  # 1-based position in the series, the x of a series plotted by position
    x: float | None
    y: float | None
    x_at: FollowKey | None  # (sheet, row, col) of the x cell; None for a cached value
    y_at: FollowKey | None

    @property
    def x_cell(self) -> str:
        return _address(self.x_at)

    @property
    def y_cell(self) -> str:
        return _address(self.y_at)


def _address(at: FollowKey | None) -> str:
    """ "Sheet!A1", or "" for a value held in the chart only."""
    return "" if at is None else f"{at[0]}!{_coord(at[1], at[2])}"


@dataclass
class TrendlineUse:
    """One chart series with trendlines, as the chart fits it."""

    chart: Chart
    series: ChartSeries
    x_ref: Ref | None  # the series' x (category) reference, names resolved
    y_ref: Ref | None
    points: list[SeriesPoint] = field(default_factory=list)  # paired positions only
    x_count: int = 0  # values the x reference (or literal) holds
    y_count: int = 0
    status: str = "audited"  # or why not: "non-linear", "too few points", "model line", …
    why: str = ""
    runs_into: list[str] = field(default_factory=list)  # other regressions' data the extra reach
    table_rest: Any = None  # what of its table continues past it (locate.trendline_table)

    @property
    def linear(self) -> Trendline | None:
        return next((t for t in self.series.trendlines if t.kind == "linear"), None)

    @property
    def shows(self) -> set[str]:
        """What the labels of its linear trendlines show: "equation", "r_squared"."""
        shown: set[str] = set()
        for line in self.series.trendlines:
            if line.kind == "linear" and line.display_equation:
                shown.add("equation")
            if line.kind == "linear" and line.display_r_squared:
                shown.add("r_squared")
        return shown

    @property
    def by_position(self) -> bool:
        return self.series.x_by_position

    @property
    def used(self) -> list[SeriesPoint]:
        return [p for p in self.points if p.x is not None and p.y is not None]

    def pairs(self) -> tuple[list[float], list[float]]:
        """x and y of the plotted points."""
        xs, ys = [], []
        for point in self.points:
            if point.x is not None and point.y is not None:
                xs.append(point.x)
                ys.append(point.y)
        return xs, ys

    @property
    def describe(self) -> str:
        name = f" {self.series.name!r}" if self.series.name else ""
        return f"series {self.series.index + 1}{name} of {self.chart.label}"

    @property
    def forced_intercept(self) -> float | None:
        line = self.linear
        return None if line is None else line.intercept

    @property
    def x_text(self) -> str:
        return _axis_text(self.series.x, self.x_ref, "x")

    @property
    def y_text(self) -> str:
        return _axis_text(self.series.y, self.y_ref, "y")

    @property
    def length_mismatch(self) -> bool:
        return not self.by_position and self.x_count != self.y_count


def _axis_text(values: SeriesValues | None, ref: Ref | None, axis: str) -> str:
    if ref is not None:
        return ref.address
    if values is not None and values.formula:
        return values.formula
    return f"{axis} values cached in the chart"


# One survey a workbook, shared by the locator and the checks; keyed by id() because Workbook
# is unhashable, and dropped when its workbook is collected.
_SURVEYS: dict[int, list[TrendlineUse]] = {}


def survey(workbook: Workbook, evaluator: Evaluator | None = None) -> list[TrendlineUse]:
    """Every chart series that carries a trendline, read as the chart fits it."""
    key = id(workbook)
    known = _SURVEYS.get(key)
    if known is not None:
        return known
    found: list[TrendlineUse] = []
    for chart in workbook.charts:
        for series in chart.series:
            if series.trendlines:  # an evaluator (an index of every formula) only when needed
                evaluator = evaluator or Evaluator(workbook)
                found.append(_read_use(workbook, evaluator, chart, series))
    _SURVEYS[key] = found
    weakref.finalize(workbook, _SURVEYS.pop, key, None)
    return found


def _resolve(workbook: Workbook, values: SeriesValues | None, sheet: str) -> Ref | None:
    """The block a series reference names (a defined name resolved); None for literals, unions
    and blocks in other workbooks."""
    if values is None or values.formula is None:
        return None
    try:
        node = parse("=" + values.formula, sheet, workbook)
    except FormulaError:
        return None
    return node.ref if isinstance(node, RefNode) and not node.ref.external else None


series_block = _resolve  # the same, for the modules that read every chart series' block


def _cells(ref: Ref) -> list[tuple[int, int]]:
    """A series block's cells in series order: down a column, or across a row."""
    if ref.cols == 1 or ref.rows > 1:
        return [(r, c) for c in range(ref.c1, ref.c2 + 1) for r in range(ref.r1, ref.r2 + 1)]
    return [(ref.r1, c) for c in range(ref.c1, ref.c2 + 1)]


def _axis_values(
    workbook: Workbook, evaluator: Evaluator, values: SeriesValues | None, ref: Ref | None
) -> tuple[list[object], list[FollowKey | None]]:
    """The values a series axis plots, with their cells; cached values when no cells hold them."""
    if ref is not None and workbook.sheet(ref.sheet) is not None:
        sheet = workbook.sheet(ref.sheet)
        assert sheet is not None
        cells = _cells(ref) if ref.cols == 1 or ref.rows == 1 else _cells(ref)[: ref.rows]
        out: list[object] = []
        for row, col in cells:
            cell = sheet.get(row, col)
            out.append(_cell_value(workbook, evaluator, cell))
        return out, [(sheet.name, r, c) for r, c in cells]
    cached: list[object] = list(values.cached) if values is not None else []
    return cached, [None] * len(cached)


def _cell_value(workbook: Workbook, evaluator: Evaluator, cell: Cell | None) -> object:
    if cell is None:
        return None
    if cell.formula is None or workbook.stored_values:
        return cell.value
    try:
        return evaluator.cell_value(cell.sheet, cell.row, cell.col)
    except Unsupported:
        return cell.value


def _number(value: object) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    return float(value) if math.isfinite(value) else None


def _read_use(
    workbook: Workbook, evaluator: Evaluator, chart: Chart, series: ChartSeries
) -> TrendlineUse:
    x_ref = _resolve(workbook, series.x, chart.sheet)
    y_ref = _resolve(workbook, series.y, chart.sheet)
    use = TrendlineUse(chart, series, x_ref, y_ref)
    ys, y_cells = _axis_values(workbook, evaluator, series.y, y_ref)
    xs, x_cells = _axis_values(workbook, evaluator, series.x, x_ref)
    use.x_count, use.y_count = len(xs), len(ys)
    pairs = len(ys) if use.by_position else min(len(xs), len(ys))
    for i in range(pairs):
        x = float(i + 1) if use.by_position else _number(xs[i])
        x_at = x_cells[i] if i < len(x_cells) and not use.by_position else None
        use.points.append(SeriesPoint(i + 1, x, _number(ys[i]), x_at, y_cells[i]))
    use.status, use.why = _status(workbook, use)
    return use


def _status(workbook: Workbook, use: TrendlineUse) -> tuple[str, str]:
    line = use.linear
    if line is None:
        kinds = ", ".join(sorted({t.kind for t in use.series.trendlines}))
        return "non-linear", f"only a {kinds} trendline (not a straight-line fit)"
    if len(use.used) < MIN_POINTS:
        return "too few points", f"{len(use.used)} plotted point(s) hold numbers"
    if line.intercept not in (None, 0.0):
        return "fixed intercept", f"the intercept is fixed at {line.intercept:g}"
    shape = _shape(workbook, use)
    if shape == "line":
        return "model line", (
            "its y cells are formulas of the x cell in their row and constants: a line the "
            "author drew, not data (a straight-line fit of it is exact by construction)"
        )
    if shape == "residual":
        return "residuals", (
            "its y cells subtract a line of x from the data: a residual plot, whose trendline "
            "is flat by construction"
        )
    return "audited", ""


def _shape(workbook: Workbook, use: TrendlineUse) -> str:
    """The formula shape of a series' y cells ("line", "residual" or ""); "" when by position."""
    if use.by_position or use.x_ref is None or use.y_ref is None:
        return ""
    used = use.used
    return formula_shape(workbook, [p.y_at for p in used], [p.x_at for p in used])


def _coord(row: int, col: int) -> str:
    from auditor.grid import column_letter

    return f"{column_letter(col)}{row}"
