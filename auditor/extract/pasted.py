"""The data of a regression found from a pasted table: the stored values of the cells that
reproduce it, as they are (columns or rows), with no extension over neighbouring rows."""

from __future__ import annotations

import math

import numpy as np

from auditor.grid import column_letter
from auditor.locate.pasted_spec import stored_columns
from auditor.locate.spec import RegressionSpec
from auditor.model import DataPoint
from auditor.read.workbook import Workbook


def pasted_points(
    workbook: Workbook, spec: RegressionSpec
) -> tuple[np.ndarray, np.ndarray, list[DataPoint], list[tuple[str, str]]]:
    """x (n, k) and y of the rows in use, every row as a DataPoint, and the cells dropped."""
    x, y = stored_columns(workbook, spec)
    by_rows = spec.y.r1 == spec.y.r2 and spec.y.c2 > spec.y.c1
    points: list[DataPoint] = []
    dropped: list[tuple[str, str]] = []
    # Whole arrays judged at once, then each row's numbers as Python floats (one C call).
    keep = np.isfinite(y) & np.isfinite(x).all(axis=1)
    for i, (xs, y_value, used) in enumerate(
        zip(x.tolist(), y.tolist(), keep.tolist(), strict=True)
    ):
        row = spec.y.r1 if by_rows else spec.y.r1 + i
        points.append(
            DataPoint(
                row,
                [v if math.isfinite(v) else None for v in xs],
                y_value if math.isfinite(y_value) else None,
                used,
                used,
                "" if used else "not a number now",
            )
        )
        if not used:
            col = spec.y.c1 + i if by_rows else spec.y.c1
            dropped.append((f"{spec.y.sheet}!{column_letter(col)}{row}", "not a number now"))
    return x[keep].reshape(-1, x.shape[1]), y[keep], points, dropped
