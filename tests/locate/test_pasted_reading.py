"""A pasted table whose data changed by one reading, with nothing else to link it to its data
(no residual output, headers other than the table's names): the pair of columns whose fit gives
every number once one reading is put back is its source, and the table is stale.

Tables are written by ``fixtures/pasted_layouts.py`` with numbers from statsmodels OLS (the
outside reference); the recomputed slope is checked against numpy's least squares.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from fixtures.pasted_layouts import Data, Scene, Table, write_scene


def _audit(scene: Scene, table: Table, tmp_path: Path) -> RegressionResult:
    path = tmp_path / "pasted.xlsx"
    write_scene(scene, path)
    result = audit_workbook(path, load_policy("general"))
    cells = set(table.placed.values())
    found = [r for r in result.regressions if {v.cell for v in r.reported.values()} & cells]
    assert len(found) == 1
    return found[0]


@pytest.mark.parametrize(("seed", "by_rows"), [(1, False), (2, False), (3, True)])
def test_one_changed_reading_names_the_source_of_a_stale_table(
    seed: int, by_rows: bool, tmp_path: Path
) -> None:
    rng = np.random.default_rng(seed)
    n = 12 + seed
    x = np.sort(rng.uniform(1.0, 40.0, n)).round(2)
    y = (3.5 + 0.8 * x + rng.normal(0.0, 4.0, n)).round(3)
    # headers other than the names the table uses: nothing but the numbers links them
    data = Data("Readings", 1, 1, ["Signal", "Dose"], np.column_stack([y, x]), by_rows)
    index = int(rng.integers(n))
    now = data.values.copy()
    now[index, 0] -= 15.0  # corrected after the table was pasted
    data.stored = now
    table = Table("Fit", 0, 0, data, coefficients_only=False)
    regression = _audit(Scene([data], [table]), table, tmp_path)
    assert (regression.x_range, regression.y_range) == (data.ref(1), data.ref(0))
    slope = float(np.polyfit(now[:, 1], now[:, 0], 1)[0])
    assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
    (stale,) = [f for f in regression.findings if f.check == "table-stale"]
    assert stale.kind == "stale-value"
    assert "one reading changed since the table was pasted" in stale.message
    assert f"{data.values[index, 0]:.6g}" in stale.message  # the reading that reproduces it
