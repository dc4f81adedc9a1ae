"""Attaching typed copies of a trendline's figures to its regression, by value, line or text.

The copies are the numbers an author read off the chart's label and typed into cells or into
formulas (``=(1.49*$B2)+21.9``, ``=(C2-21.9)/1.49``).

A chart label is no cell, so these copies are the trendline's only reported values. They are
recognised by what they are, not by how they are spelt:

* **by value** (`trendline_values`): a constant (typed in a cell, or a literal inside a formula,
  with the sign the formula gives it) that equals the trendline's slope, intercept or R² at the
  digits it shows. A label is only read when the chart shows it (the equation for slope and
  intercept, R² for R²), and coincidence is kept out by digits: a constant alone needs four
  significant digits, two constants of one formula matching slope and intercept need three each;
* **by structure** (`trendline_lines`): a formula that is a straight line of the series' own x
  cell (``m·x + c``) close to the trendline (within a tenth of y's span over the plotted x) is
  the author's copy of that trendline's equation even when a digit is wrong: its constants are
  attached as the reported slope and intercept, so a wrong digit is judged, not missed.

A formula copied down a column (or across a row) is taken at its first cell only. Constants
inside a chart series or a regression's data ranges are data, never copies. A label copied
as text is read by :mod:`auditor.locate.trendline_labels`.
"""

from __future__ import annotations

from auditor.formula.syntax import Node, Ref
from auditor.locate.spec import RegressionSpec
from auditor.locate.trendline_figures import FollowKey, TrendFigures, figures, put_copy
from auditor.locate.trendline_labels import attach_equation, equation_texts
from auditor.locate.trendline_lines import author_lines, lines_of_one_cell
from auditor.locate.trendline_values import attach_by_value, literals_of
from auditor.read.workbook import Workbook


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


def attach_copies(
    workbook: Workbook, specs: list[RegressionSpec], parsed: dict[FollowKey, Node]
) -> None:
    """Attach to every trendline regression the typed copies of the figures its chart shows."""
    targets = [spec for spec in specs if spec.trendlines]
    if not targets:
        return
    data_cells = _series_cells(specs)
    literals = literals_of(workbook, parsed, data_cells)
    equations = equation_texts(workbook)
    one_cell_lines = lines_of_one_cell(parsed)
    for spec in targets:
        found, shown = _shown_figures(spec)
        if found is None or not shown:
            continue
        lines = author_lines(workbook, spec, one_cell_lines, found) if "slope" in shown else []
        taken = {cell.address for cell, _ in lines}
        for cell, line in lines:
            if line.slope_literal is not None:
                put_copy(spec, "slope", cell, line.slope_literal)
            if line.intercept_literal is not None and "intercept" in shown:
                put_copy(spec, "intercept", cell, line.intercept_literal)
        for cell, figures_typed in equations:
            attach_equation(spec, cell, figures_typed, found, shown)
        attach_by_value(workbook, spec, literals, found, shown, taken)
