"""The data of a chart trendline: the series' points exactly as the chart plots them.

A trendline fits the plotted points and nothing else: no rows added below its range, no total
row to leave out, no pair the chart does not draw. So the intended table of a trendline regression
is the series itself (paired by position; against 1..n for a series plotted by position), and
what the chart fits "as written" is the same table.
"""

from __future__ import annotations

import numpy as np

from auditor.extract import Extracted
from auditor.locate.spec import RegressionSpec
from auditor.locate.trendlines import TrendlineUse
from auditor.model import DataPoint


def _row_of(address: str, position: int) -> int:
    """The sheet row of a point's cell (its position when the chart alone holds the value)."""
    coord = address.rpartition("!")[2]
    digits = "".join(ch for ch in coord if ch.isdigit())
    return int(digits) if digits else position


def extract_series(spec: RegressionSpec) -> Extracted:
    use: TrendlineUse = spec.trendlines[0]
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    xs: list[float] = []
    ys: list[float] = []
    for point in use.points:
        row = _row_of(point.y_cell, point.position)
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
