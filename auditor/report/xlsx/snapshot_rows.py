"""Which rows of a long data table the snapshot lists.

Up to ``SNAPSHOT_ROWS`` rows the snapshot lists every one. A longer table (a regression over
200,000 rows took 28 s and 32 MB of audit.xlsx to list in full, for rows nobody reads one by
one) lists the rows a reviewer looks for: every row regaudit treated otherwise than a plain used
point (dropped, parsed from text, left out as a total, outside the author's range, or seen
differently by the author's formula and the intended fit), the most influential used points
(largest leverage, Cook's distance and residual), and the first and last rows, in source order.
The block of used points beside the table, which the live formulas and the charts read, keeps
every point, so the numbers recomputed in the sheet are those of the whole table.
"""

from __future__ import annotations

from collections.abc import Sequence

from auditor.model import DataPoint

SNAPSHOT_ROWS = 5_000  # rows listed in full; beyond, the rows that matter (at most this many)
MOST_INFLUENTIAL = 25  # of each measure: leverage, Cook's distance, residual
EDGE_ROWS = 10  # the first and the last rows of the table


def _treated_otherwise(point: DataPoint) -> bool:
    return bool(point.reason) or not point.used or point.used != point.used_as_written


def _largest(points: Sequence[DataPoint], measure: str) -> list[int]:
    values = [(index, getattr(point, measure)) for index, point in enumerate(points)]
    known = [(index, abs(value)) for index, value in values if value is not None]
    known.sort(key=lambda pair: (-pair[1], pair[0]))
    return [index for index, _ in known[:MOST_INFLUENTIAL]]


def snapshot_points(points: Sequence[DataPoint]) -> list[DataPoint]:
    """The points the snapshot table lists, in source order: all of them up to SNAPSHOT_ROWS."""
    if len(points) <= SNAPSHOT_ROWS:
        return list(points)
    chosen = set(range(EDGE_ROWS)) | set(range(len(points) - EDGE_ROWS, len(points)))
    for measure in ("leverage", "cooks_distance", "residual"):
        chosen.update(_largest(points, measure))
    for index, point in enumerate(points):
        if len(chosen) >= SNAPSHOT_ROWS:
            break
        if _treated_otherwise(point):
            chosen.add(index)
    return [points[index] for index in sorted(chosen)]
