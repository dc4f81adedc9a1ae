"""The points' rows as arrays (``RegressionContext.point_rows``) and the checks that read them
give what a plain walk over the points gives, on generated tables: rows left unused, total
rows, text and blank rows, ranges shorter or longer than the table, rows out of order."""

from __future__ import annotations

import random
from dataclasses import replace

import numpy as np
import pytest

from auditor.checks.data import left_out
from auditor.checks.formula_audit import off_table
from auditor.context import PointRows, RegressionContext
from auditor.fit.ols import fit_ols
from auditor.formula.syntax import Ref
from auditor.model import DataPoint
from tests.design.test_design_support import context

REASONS = ("", "empty", "text 'n/a'", "outside the formula range", "a total row")


def _generated(seed: int) -> RegressionContext:
    """A table of 5-40 points from row 3-12, some unused for a reason, ranges that start and
    end anywhere around it, sometimes the points out of order or a row twice."""
    rng = random.Random(seed)
    n = rng.randint(5, 40)
    x = np.array([rng.uniform(0.0, 10.0) for _ in range(n)])
    y = 2.0 * x + np.array([rng.gauss(0.0, 1.0) for _ in range(n)])
    ctx = context(x, y)
    start = rng.randint(3, 12)
    points = []
    for i in range(n):
        used = rng.random() < 0.7
        reason = "" if used and rng.random() < 0.8 else rng.choice(REASONS)
        value: list[float | None] = [None] if rng.random() < 0.2 else [float(x[i])]
        points.append(DataPoint(start + i, value, float(y[i]), used, used, reason))
    if rng.random() < 0.3:
        rng.shuffle(points)
    if rng.random() < 0.2:
        points.append(replace(points[0], used=False, reason="empty"))  # one row twice
    totals = sorted(rng.sample([p.row for p in points], k=rng.randint(0, 2)))
    used = [(x[p.row - start], p.y) for p in points[:n] if p.used]
    fitted_x = np.array([[a] for a, _ in used]).reshape(-1, 1)
    fitted_y = np.array([b for _, b in used], dtype=float)
    data = replace(ctx.data, x=fitted_x, y=fitted_y, points=points, total_rows=totals)
    r1, r2 = start + rng.randint(-4, 6), start + n - 1 + rng.randint(-6, 8)
    shift = rng.choice((0, 0, 1))
    spec = replace(
        ctx.spec,
        x=Ref("Data", r1, 1, r2, 1),
        y=Ref("Data", r1 + shift, 2, r2 + shift, 2),
        found_by=rng.choice(("formulas", "hand-built")),
    )
    fit = fit_ols(data.x, data.y, confidence=ctx.policy.get("confidence"))
    return replace(ctx, spec=spec, data=data, fit=fit, design=None, rows=None)


def _plain_off_table(ctx: RegressionContext) -> tuple[int, int, list[int], dict[int, DataPoint]]:
    """The walk the arrays replace: every point by row, every row of the ranges tested."""
    spec, data = ctx.spec, ctx.data
    table = [p.row for p in data.points if p.used or p.row in data.total_rows]
    first, last = min(table), max(table)
    by_row = {p.row: p for p in data.points}
    outside = [
        r
        for r in range(max(spec.x.r1, spec.y.r1), min(spec.x.r2, spec.y.r2) + 1)
        if (r < first or r > last) and (r not in by_row or not by_row[r].used)
    ]
    return first, last, outside, by_row


def _plain_left_out(ctx: RegressionContext) -> list[DataPoint]:
    spans = [(r.r1, r.r2) for r in (ctx.spec.x, ctx.spec.y)]
    return [
        p
        for p in ctx.data.points
        if p.used
        and "outside the formula" in p.reason
        and not any(r1 <= p.row <= r2 for r1, r2 in spans)
    ]


@pytest.mark.parametrize("seed", range(60))
def test_point_rows_match_the_points(seed: int) -> None:
    ctx = _generated(seed)
    index = PointRows.of(ctx.data.points)
    assert index.rows.tolist() == [p.row for p in ctx.data.points]
    assert index.used.tolist() == [p.used for p in ctx.data.points]
    assert ctx.point_rows() is ctx.point_rows()  # made once


@pytest.mark.parametrize("seed", range(60))
def test_off_table_matches_a_walk_over_every_row(seed: int) -> None:
    ctx = _generated(seed)
    found = off_table(ctx)
    if not any(p.used or p.row in ctx.data.total_rows for p in ctx.data.points):
        assert found is None
        return
    assert found is not None
    first, last, outside, by_row = _plain_off_table(ctx)
    assert (found.first, found.last, found.outside) == (first, last, outside)
    for row in outside:  # the rows the check asks about are the same points
        assert found.by_row.get(row) is by_row.get(row)


@pytest.mark.parametrize("seed", range(60))
def test_left_out_matches_a_walk_over_the_points(seed: int) -> None:
    ctx = _generated(seed)
    assert left_out(ctx) == _plain_left_out(ctx)


def test_a_range_below_the_table_and_one_above() -> None:
    """Hand-made: table rows 4-13 (row 9 unused, text); ranges 2-16: rows 2, 3 and 14-16 are
    off the table; row 9, inside it, is not counted (a row skipped inside the table is
    another check's)."""
    ctx = context(np.arange(10.0), np.arange(10.0) * 3.0 + 1.0)
    points = list(ctx.data.points)
    points[5] = replace(points[5], used=False, reason="text 'n/a'")
    spec = replace(ctx.spec, x=Ref("Data", 2, 1, 16, 1), y=Ref("Data", 2, 2, 16, 2))
    ctx = replace(ctx, spec=spec, data=replace(ctx.data, points=points), rows=None)
    found = off_table(ctx)
    assert found is not None
    assert (found.first, found.last, found.outside) == (4, 13, [2, 3, 14, 15, 16])
