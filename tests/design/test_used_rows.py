"""The rows the design metrics name, read from the points' shared row array (design.rows.UsedRows
through context.PointRows), are those of a list of every used point's row: checked on generated
tables with points left out anywhere (text cells, blanks, rows outside the formula's range),
where a wrong look-up would name the wrong row for the largest leverage or share of Sxx, or for
the points whose removal moves p the most."""

from __future__ import annotations

import numpy as np
from test_design_support import context

from auditor.context import PointRows
from auditor.design.metrics import compute_design
from auditor.design.rows import UsedRows
from auditor.extract.record import Extracted
from auditor.fit.ols import fit_ols
from auditor.model import DataPoint


def _with_left_out(rng: np.random.Generator, n: int) -> Extracted:
    """n used points (rows from 5, a jump after a left-out block) among points left out."""
    points: list[DataPoint] = []
    xs: list[float] = []
    ys: list[float] = []
    row = 5
    while len(xs) < n:
        if rng.random() < 0.25:
            points.append(DataPoint(row, [None], None, False, False, "text 'n/a'"))
        else:
            x = float(rng.uniform(0.0, 50.0)) if rng.random() < 0.9 else 400.0  # a far point
            y = 3.0 + 0.4 * x + float(rng.normal(0.0, 2.0))
            points.append(DataPoint(row, [x], y, True, True))
            xs.append(x)
            ys.append(y)
        row += int(rng.integers(1, 4))
    return Extracted(
        x=np.array(xs).reshape(-1, 1), y=np.array(ys), points=points,
        intended_x_range="Data!A5:A9", intended_y_range="Data!B5:B9",
    )  # fmt: skip


def test_used_rows_are_the_rows_of_the_used_points_in_order() -> None:
    rng = np.random.default_rng(8)
    for n in (1, 3, 12, 40):
        data = _with_left_out(rng, n)
        rows = PointRows.of(data.points).used_rows()
        listed = [p.row for p in data.points if p.used]
        assert len(rows) == len(listed) == n
        assert [rows[i] for i in range(n)] == listed
        assert all(type(rows[i]) is int for i in range(n))  # plain ints, as JSON writes them
        assert rows[-1] == listed[-1]


def test_design_metrics_name_the_same_rows_either_way() -> None:
    rng = np.random.default_rng(31)
    named = 0
    policy = context(np.arange(5.0), np.arange(5.0)).policy
    for case in range(60):
        data = _with_left_out(rng, int(rng.integers(3, 60)))
        fit = fit_ols(data.x, data.y)
        given = compute_design(data, fit, policy, None, PointRows.of(data.points).used_rows())
        listed = compute_design(data, fit, policy)
        assert repr(given.to_dict()) == repr(listed.to_dict()), case
        named += given.max_leverage_row is not None and given.drop is not None
    assert named >= 50  # the rows were asked for, not skipped


def test_an_empty_table_has_no_rows() -> None:
    rows = UsedRows(np.zeros(0, dtype=np.int64))
    assert len(rows) == 0
