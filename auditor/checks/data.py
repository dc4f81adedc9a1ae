"""Data checks: rows the author's formulas do not see, and fits that cannot be made."""

from __future__ import annotations

import numpy as np

from auditor.checks.base import check
from auditor.context import RegressionContext
from auditor.diagnose.fixes import intended_ranges
from auditor.grid import column_letter
from auditor.model import DataPoint, Finding, Severity
from auditor.wording import point_word, rows_text


def _severity(context: RegressionContext) -> Severity:
    """Major when a reported number is already wrong because of it, minor while all agree."""
    if any(v.verdict == "mismatch" for v in context.reported.values()):
        return "major"
    return "minor"


def left_out(context: RegressionContext) -> list[DataPoint]:
    """The used points of the table outside both ranges the formulas use, in order. A row
    inside one of the two ranges is not left out by a short range: a y range moved a row
    against x reads it on one side (xy-rows-misaligned says so)."""
    spec = context.spec
    spans = [(r.c1, r.c2) if spec.in_rows else (r.r1, r.r2) for r in (spec.x, spec.y)]
    index, points = context.point_rows(), context.data.points
    inside = np.zeros(index.rows.shape, dtype=np.bool_)
    for first, last in spans:
        inside |= (index.rows >= first) & (index.rows <= last)
    return [
        points[i]
        for i in np.flatnonzero(index.used & ~inside).tolist()
        if "outside the formula" in points[i].reason
    ]


@check("rows-outside-range", "Data rows of the table lie outside the range the formulas use.")
def rows_outside_range(context: RegressionContext) -> list[Finding]:
    """Rows added below (or above) a fixed range are silently left out of the fit.

    Failing: the table runs A2:B15 but ``=SLOPE(B2:B13,A2:A13)``: rows 14–15 are not used.
    Passing: the range covers every data row of the table.
    """
    spec = context.spec
    across = spec.in_rows  # a table in rows: each point is a column
    outside = left_out(context)
    if not outside:
        return []
    rows = [p.row for p in outside]
    return [
        Finding(
            check="rows-outside-range",
            kind="range-short",
            severity=_severity(context),
            cells=[spec.y.address],
            message=(
                f"The formulas use {spec.y.address}, but the data table continues: "
                f"{len(rows)} {point_word(across)}(s) ({rows_text(rows, across)}) hold data the "
                "regression leaves out. "
                f"The full table is {context.data.intended_y_range}."
            ),
            evidence={"rows_left_out": len(rows), "first_row": rows[0], "last_row": rows[-1]}
            | ({"columns_left_out": rows_text(rows, across)} if across else {}),
            fix=f"Extend the ranges to {context.data.intended_x_range} and "
            f"{context.data.intended_y_range} (or use a table so new "
            f"{point_word(across)}s are included).",
        )
    ]


@check("text-numbers-skipped", "Numbers stored as text are silently skipped by the formulas.")
def text_numbers_skipped(context: RegressionContext) -> list[Finding]:
    """SLOPE, INTERCEPT, STEYX and RSQ skip a pair whose cell holds text, even "12.5".

    Failing: B7 holds the text '0.412' (left-aligned): SLOPE uses 11 of the 12 points.
    Passing: every data cell holds a number.
    """
    if not context.data.parsed:
        return []
    cells = [cell for cell, _ in context.data.parsed]
    return [
        Finding(
            check="text-numbers-skipped",
            kind="text-number",
            severity=_severity(context),
            cells=cells,
            message=(
                f"{len(cells)} data cell(s) hold numbers stored as text ({', '.join(cells[:5])}"
                f"{'…' if len(cells) > 5 else ''}); SLOPE-family formulas skip those rows "
                "without warning, and LINEST returns #VALUE!."
            ),
            evidence={"cells": len(cells), "example": context.data.parsed[0][1]},
            fix="Convert the cells to numbers (e.g. VALUE() or 'Convert to Number') and "
            "recalculate.",
        )
    ]


def _end_above_totals(context: RegressionContext) -> str:
    meant = intended_ranges(context.spec, context.data)
    last = f"the last data {point_word(context.spec.in_rows)}"
    if meant is None:
        return f"End the ranges at {last}."
    return f"End the ranges at {last}: {meant[1].address} and {meant[0].address}."


@check("total-row-in-range", "A total or mean row lies inside the range of the regression.")
def total_row_in_range(context: RegressionContext) -> list[Finding]:
    """A row of totals or means inside the range is fitted as if it were a data point.

    Failing: ``=SLOPE(B2:B14,A2:A14)`` where row 14 is "Mean".
    Passing: the range stops at the last data row.
    """
    spec = context.spec
    across = spec.in_rows  # a table in rows: the total is a column
    first, last = (spec.y.c1, spec.y.c2) if across else (spec.y.r1, spec.y.r2)
    inside = [r for r in context.data.total_rows if first <= r <= last]
    if not inside:
        return []
    said = rows_text(inside, across)
    where = (
        [f"{spec.y.sheet}!{column_letter(c)}{spec.y.r1}" for c in inside]
        if across
        else [f"{spec.y.sheet}!{column_letter(spec.y.c1)}{r}" for r in inside]
    )
    return [
        Finding(
            check="total-row-in-range",
            kind="total-row",
            severity=_severity(context),
            cells=where,
            message=(
                f"{said[0].upper()}{said[1:]} of {spec.y.address} "
                f"{'holds' if len(inside) == 1 else 'hold'} a total or mean, which the formulas "
                "fit as a data point."
            ),
            evidence={"columns" if across else "rows": inside},
            fix=_end_above_totals(context),
        )
    ]


@check("fit-degenerate", "The data cannot support the regression (too few points, constant x).")
def fit_degenerate(context: RegressionContext) -> list[Finding]:
    """Say in words when no slope or no standard error can be computed.

    Failing: two points, or six points all at x = 4.0.
    Passing: at least three points with at least two distinct x values.
    """
    fit = context.fit
    if fit.status == "ok":
        return []
    severity: Severity = "info" if fit.status == "perfect-fit" else "major"
    return [
        Finding(
            check="fit-degenerate",
            severity=severity,
            cells=[context.spec.y.address],
            message=fit.message,
            evidence={"status": fit.status, "n": fit.n},
            fix="Collect more points over a wider spread of x." if severity == "major" else "",
        )
    ]
