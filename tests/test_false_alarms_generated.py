"""Generated variety for "never cry wolf": seeded sheets built in memory, with stored values
computed by numpy.polyfit (the outside reference, as a spreadsheet would have saved them).

Each sheet holds one long series and several regressions over consecutive segments of it whose
ranges touch or share a boundary row (the author's ranges), each with its own SLOPE/INTERCEPT
block; the y values are rounded so that sums of earlier values recur by chance. The answer key
is the generator's own layout: every segment is found as its own regression over exactly its
rows, every reported value is confirmed, and no major or critical finding is raised.
"""

from __future__ import annotations

import numpy as np
import pytest

from auditor.model import WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.workbook import Cell, Sheet, Workbook

POLICY = load_policy("general")


def _segments(rng: np.random.Generator, rows: int) -> list[tuple[int, int]]:
    """Consecutive row spans of at least 8 rows; the next one starts on the last row of the
    previous one (shared boundary) or right after it."""
    spans, start = [], 1
    while rows - start + 1 >= 16:
        end = start + int(rng.integers(8, min(30, rows - start - 6)))
        spans.append((start, end))
        start = end if rng.random() < 0.5 else end + 1
    spans.append((start, rows))
    return spans


def _workbook(seed: int) -> tuple[Workbook, list[tuple[int, int]], np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    rows = int(rng.integers(40, 90))
    x = np.arange(1.0, rows + 1.0)
    slopes = rng.uniform(-2.0, 2.0, 8)
    y = np.round(np.cumsum(slopes[(np.arange(rows) * 8) // rows]) + rng.normal(0, 0.3, rows), 2)
    if rows > 3:
        y[2] = round(y[0] + y[1], 2)  # a value equal to the sum above it, by chance
    sheet = Sheet("Series")

    def put(row: int, col: int, value: object, formula: str | None = None) -> None:
        sheet.cells[(row, col)] = Cell("Series", row, col, value, formula)  # type: ignore[arg-type]

    for i in range(rows):
        put(i + 1, 1, float(x[i]))
        put(i + 1, 2, float(y[i]))
    spans = _segments(rng, rows)
    for index, (first, last) in enumerate(spans):
        slope, intercept = np.polyfit(x[first - 1 : last], y[first - 1 : last], 1)
        top = 1 + 3 * index
        put(top, 4, f"Segment {index + 1} slope")
        put(top, 5, float(slope), f"=SLOPE(B{first}:B{last},A{first}:A{last})")
        put(top + 1, 4, "Intercept")
        put(top + 1, 5, float(intercept), f"=INTERCEPT(B{first}:B{last},A{first}:A{last})")
    sheet.max_row, sheet.max_col = max(rows, 3 * len(spans)), 5
    return Workbook("generated.xlsx", "", {"Series": sheet}, [], True), spans, x, y


def _audit(book: Workbook) -> WorkbookResult:
    from auditor.pipeline import audit as pipeline

    original = pipeline.read_workbook
    pipeline.read_workbook = lambda _path: book  # type: ignore[assignment]
    try:
        return audit_workbook("generated.xlsx", POLICY)
    finally:
        pipeline.read_workbook = original


@pytest.mark.parametrize("seed", range(25))
def test_segments_sharing_a_row_are_separate_and_confirmed(seed: int) -> None:
    book, spans, x, y = _workbook(500 + seed)
    result = _audit(book)
    found = sorted((r.x_range, r.y_range) for r in result.regressions)
    expected = sorted(
        (f"Series!A{first}:A{last}", f"Series!B{first}:B{last}") for first, last in spans
    )
    assert found == expected
    for regression in result.regressions:
        first = int(regression.x_range.split("!A")[1].split(":")[0])
        last = int(regression.x_range.split(":A")[1])
        assert regression.n == last - first + 1
        reference = np.polyfit(x[first - 1 : last], y[first - 1 : last], 1)
        assert regression.intended["slope"] == pytest.approx(reference[0], rel=1e-9, abs=1e-12)
        assert {v.verdict for v in regression.reported.values()} == {"confirmed"}
    serious = [
        (f.check, f.message) for f in result.all_findings() if f.severity in ("major", "critical")
    ]
    assert serious == []
