"""Chart trendline checks: series whose x and y differ in length, fits against positions, and
trendlines that are listed but not audited."""

from __future__ import annotations

from typing import Any

from auditor.checks.base import check
from auditor.context import RegressionContext, WorkbookContext
from auditor.locate.trendline_figures import figures
from auditor.locate.trendline_series import TrendlineUse, survey
from auditor.model import Finding

SHOWN_EXTRA = 6  # extra cells named in a finding's cells


@check(
    "trendline-series-length",
    "A chart series pairs x and y ranges of different lengths under its trendline.",
)
def series_length(context: RegressionContext) -> list[Finding]:
    """A scatter series pairs x and y by position; ranges of different lengths mean a mis-selected
    block: the extra values are not paired, so the trendline is not the fit of either block.

    Failing: x ``Data!B17:B25`` (9 cells) with y ``Data!D17:D30`` (14 cells), where D26:D30 hold
    the next block's readings.
    Passing: x ``Data!B17:B25`` with y ``Data!D17:D25``.
    """
    findings = []
    for use in context.spec.trendlines:
        if use.linear is None or not use.length_mismatch:
            continue
        findings.append(_length_finding(use, context))
    return findings


def _extra(use: TrendlineUse) -> tuple[str, list[str], list[Any]]:
    """Which axis is longer, its unpaired cells, and the numbers they hold."""
    longer = "y" if use.y_count > use.x_count else "x"
    ref = use.y_ref if longer == "y" else use.x_ref
    values = use.series.y if longer == "y" else use.series.x
    paired = min(use.x_count, use.y_count)
    cells: list[str] = []
    if ref is not None:
        from auditor.grid import column_letter

        column = ref.cols == 1 or ref.rows > 1
        for offset in range(paired, max(use.x_count, use.y_count)):
            row = ref.r1 + offset if column else ref.r1
            col = ref.c1 if column else ref.c1 + offset
            cells.append(f"{ref.sheet}!{column_letter(col)}{row}")
    cached = list(values.cached[paired:]) if values is not None else []
    numbers = [v for v in cached if isinstance(v, float)]
    return longer, cells, numbers


def _length_finding(use: TrendlineUse, context: RegressionContext) -> Finding:
    longer, cells, numbers = _extra(use)
    paired = min(use.x_count, use.y_count)
    extra = max(use.x_count, use.y_count) - paired
    held = (
        f"{len(numbers)} of them hold numbers ({', '.join(f'{v:.6g}' for v in numbers[:5])}"
        f"{', …' if len(numbers) > 5 else ''})"
        if numbers
        else "none of them holds a number"
    )
    into = f", running into {', '.join(use.runs_into)}" if use.runs_into else ""
    xs, ys = use.pairs()
    found = figures(xs, ys, context.spec.intercept)
    fitted = (
        f" The trendline then fits the {paired} pairs: slope {found.slope:.6g}, intercept "
        f"{found.intercept:.6g}."
        if found is not None
        else ""
    )
    return Finding(
        check="trendline-series-length",
        kind="series-length-mismatch",
        severity="major" if numbers else "minor",
        cells=cells[:SHOWN_EXTRA],
        message=(
            f"The {use.describe} pairs x {use.x_text} ({use.x_count} values) with y {use.y_text} "
            f"({use.y_count} values): the {longer} range runs {extra} cell(s) past the "
            f"other{into}; {held}. A chart pairs x and y by position, so only the first "
            f"{paired} pairs are drawn and fitted (so LibreOffice draws it; other applications "
            "may place the extra values differently), and the trendline is not the fit of the "
            "block as selected." + fitted
        ),
        evidence={
            "x_range": use.x_text,
            "y_range": use.y_text,
            "x_values": use.x_count,
            "y_values": use.y_count,
            "pairs_fitted": paired,
            "extra_numbers": len(numbers),
        },
        fix=f"Select x and y ranges of the same length for the series (edit its {longer} range).",
    )


@check(
    "trendline-fits-positions",
    "A trendline fits y against 1..n: a line (bar, area) chart, or x cells holding text.",
)
def fits_positions(context: RegressionContext) -> list[Finding]:
    """Outside a scatter chart the x axis holds categories, so a trendline fits y against the
    positions 1, 2, …, n whatever the category cells hold (dates, years, labels). A scatter
    chart whose x cells hold text is plotted the same way (common practice: the spreadsheet
    ignores non-numeric x values and counts the points; LibreOffice leaves those points out).

    Failing: a line chart of sales by date, with a linear trendline.
    Passing: a scatter chart of the same data.
    """
    findings = []
    for use in context.spec.trendlines:
        if not use.by_position or use.linear is None:
            continue
        categories = use.x_text if use.x_ref is not None else "none"
        why = (
            "a scatter chart whose x cells hold text (the spreadsheet then plots the points "
            "against their positions; LibreOffice leaves the text points out instead)"
            if use.series.plot in ("scatter", "bubble")
            else f"a {use.series.plot} chart"
        )
        findings.append(
            Finding(
                check="trendline-fits-positions",
                severity="info",
                cells=[],
                message=(
                    f"The {use.describe} is {why}: its trendline fits y "
                    f"against the positions 1..{use.y_count}, not against the category cells "
                    f"({categories}). The slope is per position (one step along the axis); the "
                    "recomputation here does the same." + _date_axis_note(use)
                ),
                evidence={"plot": use.series.plot, "categories": categories},
                fix="Use a scatter chart when the trendline should fit y against the x values.",
            )
        )
    return findings


def _date_axis_note(use: TrendlineUse) -> str:
    """Evenly spaced numeric categories (dates) may be fitted as values by some applications."""
    cached = use.series.x.cached if use.series.x is not None else ()
    values = [v for v in cached if isinstance(v, float)]
    if len(values) < 2 or len(values) != len(cached):
        return ""
    steps = {round(b - a, 9) for a, b in zip(values, values[1:], strict=False)}
    if len(steps) != 1:
        return ""
    step = steps.pop()
    per_value = (
        "the slope is the same, the intercept differs"
        if step == 1
        else f"its slope is this one divided by {step:g}, the step between them"
    )
    return (
        f" The category cells are evenly spaced numbers (dates, a step of {step:g}): LibreOffice "
        f"puts them on a date axis and fits y against them instead ({per_value}; R² is the same)."
    )


NOT_AUDITED_WORDS = {
    "poly": "polynomial",
    "exp": "exponential",
    "log": "logarithmic",
    "power": "power",
    "movingAvg": "moving-average",
}


@check(
    "trendline-not-audited",
    "A chart trendline that is not a straight-line fit of data, listed with its type.",
    scope="workbook",
)
def not_audited(context: WorkbookContext) -> list[Finding]:
    """Only linear trendlines over data are recomputed; the others are listed, not ignored.

    Failing: a polynomial trendline of order 3; a linear trendline over a line typed from
    constants (``=1.2*B2+3``); a linear trendline with its intercept fixed at 5.
    Passing: a linear trendline over measured data.
    """
    if context.workbook is None or not context.workbook.charts:
        return []
    findings = []
    for use in survey(context.workbook):
        cells = [use.y_text] if use.y_ref is not None and use.y_ref.is_cell else []
        for line in use.series.trendlines:
            if line.kind == "linear":
                continue
            kind = NOT_AUDITED_WORDS.get(line.kind, line.kind)
            detail = f" of order {line.order}" if line.order else ""
            detail += f" over {line.period} points" if line.period else ""
            findings.append(
                _note(
                    f"The {kind} trendline{detail} of the {use.describe} (y {use.y_text}) is not "
                    "audited: only straight-line (linear) trendlines are recomputed.",
                    {"type": line.kind, "series": use.describe},
                    cells,
                )
            )
        if use.linear is not None and use.status != "audited":
            findings.append(
                _note(
                    f"The linear trendline of the {use.describe} (y {use.y_text}) is not "
                    f"audited: {use.why}.{_fixed_slope(use)}",
                    {"type": "linear", "status": use.status, "series": use.describe},
                    cells,
                )
            )
    return findings


def _fixed_slope(use: TrendlineUse) -> str:
    """For an intercept fixed at c: the slope of the line through (0, c), Σx(y−c)/Σx²."""
    fixed = use.forced_intercept
    if use.status != "fixed intercept" or fixed is None:
        return ""
    xs, ys = use.pairs()
    found = figures(xs, [y - fixed for y in ys], intercept=False)
    if found is None:
        return ""
    return f" Its slope with the intercept held at {fixed:g} is {found.slope:.6g}."


def _note(message: str, evidence: dict[str, Any], cells: list[str]) -> Finding:
    return Finding(
        check="trendline-not-audited",
        severity="info",
        cells=cells,
        message=message,
        evidence=evidence,
        fix="Check this trendline by hand if a decision rests on it.",
    )
