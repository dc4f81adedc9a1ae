"""A chart trendline whose series stops short of its table: rows added later, not to the chart."""

from __future__ import annotations

from typing import Any

from auditor.checks.base import check
from auditor.context import RegressionContext
from auditor.grid import column_letter
from auditor.locate.trendline_figures import TrendFigures, figures, matches
from auditor.locate.trendline_series import TrendlineUse
from auditor.locate.trendline_table import TableRest
from auditor.model import Finding, Severity
from auditor.wording import rows_text

# What a trendline label shows when nothing typed says otherwise: about four significant figures
# in the default number format (from memory: the label's General format trims to the width).
LABEL_DIGITS = 4


def _shown(value: float, digits: int) -> str:
    return f"{value:.{digits}g}"


def _typed(context: RegressionContext) -> list[tuple[str, str, float]]:
    """(figure, cell, value) of the typed copies of the trendline's slope and intercept."""
    found = []
    for key, reported in context.reported.items():
        figure = key.partition("@")[0]
        if figure in ("slope", "intercept") and isinstance(reported.value, float):
            if reported.formula is None or reported.source == "typed":
                found.append((figure, reported.cell, reported.value))
    return found


def _differs(drawn: TrendFigures, whole: TrendFigures, typed: list[tuple[str, str, float]]) -> bool:
    """The whole table's fit differs from the drawn line at the precision shown: the typed
    copies' digits when there are any, else the label's four significant figures."""
    if typed:
        return any(not matches(value, getattr(whole, figure)) for figure, _, value in typed)
    return any(
        _shown(getattr(drawn, figure), LABEL_DIGITS) != _shown(getattr(whole, figure), LABEL_DIGITS)
        for figure in ("slope", "intercept")
    )


def _severity(drawn: TrendFigures, whole: TrendFigures, rest: TableRest, differs: bool) -> Severity:
    if drawn.slope * whole.slope < 0:
        return "critical"
    if differs and not rest.notes:
        return "major"
    return "minor"


@check(
    "trendline-stops-short",
    "A chart trendline's series stops short of its table: rows that continue it are not drawn.",
)
def stops_short(context: RegressionContext) -> list[Finding]:
    """A chart series is a fixed range: rows added to its table later are not added to the
    chart, so the trendline fits the first rows only. Reported when the x and y columns continue
    directly past the series' range (below it, or right of it for data in rows) with numbers
    made like the series' last row, used by no other regression or chart series. Major when the
    whole table's fit differs at the precision shown; minor when a note beside the rows left out
    may say why; critical when the slope changes sign.

    Failing: a scatter series over ``Data!A4:A13`` / ``Data!B4:B13`` under a table that runs on
    to row 15 with two more typed pairs.
    Passing: the series covers the whole table, or a blank row (a label row such as "excluded",
    or a second series over the rest) separates the rows it leaves out.
    """
    spec = context.spec
    if spec.found_by != "trendline":
        return []
    findings = []
    for use in spec.trendlines:
        rest: TableRest | None = getattr(use, "table_rest", None)
        if rest is None or use.linear is None or rest.x_table is None or rest.y_table is None:
            continue
        xs, ys = use.pairs()
        drawn = figures(xs, ys, spec.intercept)
        whole = figures(xs + rest.xs, ys + rest.ys, spec.intercept)
        if drawn is None or whole is None:
            continue
        findings.append(_finding(context, use, rest, drawn, whole))
    return findings


def _finding(
    context: RegressionContext,
    use: TrendlineUse,
    rest: TableRest,
    drawn: TrendFigures,
    whole: TrendFigures,
) -> Finding:
    assert rest.x_table is not None and rest.y_table is not None
    typed = _typed(context)
    differs = _differs(drawn, whole, typed)
    severity = _severity(drawn, whole, rest, differs)
    lines = "column(s)" if rest.across else "row(s)"
    where = (
        ", ".join(column_letter(p) for p in rest.positions)
        if rest.across
        else rows_text(rest.positions)
    )
    digits = LABEL_DIGITS
    message = (
        f"The {use.describe} plots x {use.x_text} and y {use.y_text}, but its table continues "
        f"to {rest.x_table.address} and {rest.y_table.address}: {len(rest.positions)} "
        f"{lines} ({where}) made like the ones above, which no other regression or chart uses, "
        f"are not drawn (added to the table later, not to the chart?). The trendline shows "
        f"slope {_shown(drawn.slope, digits)}, intercept {_shown(drawn.intercept, digits)}; "
        f"the whole table ({len(use.used) + len(rest.positions)} points) gives slope "
        f"{_shown(whole.slope, digits)}, intercept {_shown(whole.intercept, digits)}."
    )
    wrong = [
        f"{cell} ({figure} {value:g}; the whole table gives {getattr(whole, figure):.6g})"
        for figure, cell, value in typed
        if not matches(value, getattr(whole, figure))
    ]
    if wrong:
        message += " That makes the typed " + "; ".join(wrong) + " wrong."
    if drawn.slope * whole.slope < 0:
        message += " The slope changes sign."
    elif not differs:
        message += " At the precision shown the line is the same."
    if rest.notes:
        message += f" A note beside them may say why they are out: {', '.join(rest.notes[:3])}."
    evidence: dict[str, Any] = {
        "left_out": len(rest.positions),
        "series_x": use.x_text,
        "series_y": use.y_text,
        "table_x": rest.x_table.address,
        "table_y": rest.y_table.address,
        "drawn_slope": drawn.slope,
        "drawn_intercept": drawn.intercept,
        "table_slope": whole.slope,
        "table_intercept": whole.intercept,
        "tolerance": "the typed copies' digits" if typed else f"{digits} significant figures",
        "typed_wrong": [
            cell for figure, cell, value in typed if not matches(value, getattr(whole, figure))
        ],
    }
    return Finding(
        check="trendline-stops-short",
        kind="range-short",
        severity=severity,
        cells=[rest.y_table.address],
        message=message,
        evidence=evidence,
        fix=(
            f"Extend the series to x {rest.x_table.address} and y {rest.y_table.address} "
            "(or plot a table, so new rows are drawn), or say why the rows are left out."
        ),
    )
