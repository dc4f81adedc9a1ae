"""Tables taken position by position, never extended: ranges paired as they are (other sheets,
unrelated rows, data laid out in rows) and a chart trendline's series as the chart plots it."""

from __future__ import annotations

import numpy as np

from auditor.extract.record import Extracted, Reader, cell_number
from auditor.grid import column_letter
from auditor.locate.locator import RegressionSpec
from auditor.model import DataPoint
from auditor.read.workbook import Workbook


def paired(workbook: Workbook, evaluator: Reader, spec: RegressionSpec) -> Extracted:
    """Ranges on different sheets, unrelated rows, or data laid out in rows: pair them position
    by position, no extension. A number stored as text is parsed for the intended fit and left
    out of the as-written pairs, as SLOPE leaves it out."""
    x_values = evaluator.range_values(spec.x)
    if spec.in_rows:
        x_values = x_values.reshape(-1, 1)  # one x row: each column is a point
    y_values = evaluator.range_values(spec.y).reshape(-1)
    k = x_values.shape[1] if x_values.ndim == 2 else 1
    n = min(len(y_values), x_values.shape[0])
    xs_used: list[list[float | None]] = []
    ys_used: list[float | None] = []
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    parsed: list[tuple[str, str]] = []
    as_written = 0
    for i in range(n):
        r, c = (spec.y.r1, spec.y.c1 + i) if spec.in_rows else (spec.y.r1 + i, spec.y.c1)
        x_notes = [cell_number(v) for v in x_values[i]]
        xs = [number for number, _ in x_notes]
        y, y_note = cell_number(y_values[i])
        used = all(v is not None for v in xs) and y is not None
        raw = [*x_values[i], y_values[i]]
        numbers = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in raw)
        reason = "" if used else "not numeric"
        if used and not numbers:
            texts = [note for _, note in x_notes if note] + ([y_note] if y_note else [])
            reason = "; ".join(texts) + " (parsed)"
            parsed.append((f"{spec.y.sheet}!{column_letter(c)}{r}", "; ".join(texts)))
        as_written += used and numbers
        points.append(DataPoint(spec.y.r1 + i, xs, y, used, used and numbers, reason))
        if used:
            xs_used.append(xs)
            ys_used.append(y)
        else:
            dropped.append((f"{spec.y.sheet}!{column_letter(c)}{r}", "not numeric"))
    return Extracted(
        x=np.array(xs_used, dtype=float).reshape(-1, k),
        y=np.array(ys_used, dtype=float),
        points=points,
        intended_x_range=spec.x.address,
        intended_y_range=spec.y.address,
        dropped=dropped,
        parsed=parsed,
        n_as_written=as_written,
    )


def series_table(spec: RegressionSpec) -> Extracted:
    """A chart trendline's data: the series' points exactly as the chart plots them (paired by
    position, against 1..n for a series plotted by position); no rows added below its range and
    no total row left out, since a trendline fits what the chart draws and nothing else."""
    use = spec.trendlines[0]  # auditor.locate.trendline_series.TrendlineUse
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    xs: list[float] = []
    ys: list[float] = []
    for point in use.points:
        row = point.y_at[1] if point.y_at is not None else point.position
        used = point.x is not None and point.y is not None
        reason = ""
        if not used:
            missing = "y" if point.y is None else "x"
            where = point.y_cell if point.y is None else point.x_cell
            reason = f"not drawn: its {missing} is not a number"
            if where:
                dropped.append((where, f"{missing} not a number: the chart skips the point"))
        points.append(DataPoint(row, [point.x], point.y, used, used, reason))
        if used:
            assert point.x is not None and point.y is not None
            xs.append(point.x)
            ys.append(point.y)
    x_text, y_text = spec.range_texts or (spec.x.address, spec.y.address)
    return Extracted(
        x=np.array(xs, dtype=float).reshape(-1, 1),
        y=np.array(ys, dtype=float),
        points=points,
        intended_x_range=x_text,
        intended_y_range=y_text,
        dropped=dropped,
        n_as_written=len(ys),
    )
