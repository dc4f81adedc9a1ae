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
    keep = []
    for i in range(len(y)):
        xs = [float(v) for v in x[i]]
        used = math.isfinite(float(y[i])) and all(math.isfinite(v) for v in xs)
        row = spec.y.r1 if by_rows else spec.y.r1 + i
        points.append(
            DataPoint(
                row,
                [v if math.isfinite(v) else None for v in xs],
                float(y[i]) if math.isfinite(float(y[i])) else None,
                used,
                used,
                "" if used else "not a number now",
            )
        )
        keep.append(used)
        if not used:
            col = spec.y.c1 + i if by_rows else spec.y.c1
            dropped.append((f"{spec.y.sheet}!{column_letter(col)}{row}", "not a number now"))
    mask = np.array(keep, dtype=bool)
    return x[mask].reshape(-1, x.shape[1]), y[mask], points, dropped
