"""The statistics of a detail sheet come in one order on every run: statistics that the reading
order ranks alike (names outside the known list) keep the order the result gives them, whatever
the string hashing of the process (a set here once made audit.xlsx differ between two runs)."""

from __future__ import annotations

import os
import subprocess
import sys

from auditor.model import RegressionResult, ReportedValue
from auditor.report.xlsx.detail import stat_rows

_PROBE = """
from auditor.model import RegressionResult, ReportedValue
from auditor.report.xlsx.detail import stat_rows
keys = ["slope", "f_p_value", "adjusted_r_squared", "ci_intercept_high", "intercept"]
reported = {k: ReportedValue(k, "Data!E" + str(i), 1.0, None) for i, k in enumerate(keys)}
result = RegressionResult("r", "Data", "A1:A9", "B1:B9", "formulas", 9, True, reported=reported)
print([key for key, _, _ in stat_rows(result)])
"""


def test_statistics_ranked_alike_keep_the_results_order() -> None:
    keys = ["p_of_f", "adjusted_r_squared", "slope", "ci_intercept_high"]
    reported = {k: ReportedValue(k, f"Data!E{i}", 1.0, None) for i, k in enumerate(keys, 1)}
    result = RegressionResult(
        "r", "Data", "A1:A9", "B1:B9", "formulas", 9, True, reported=reported,
        intended={"intercept": 2.0, "zeta_metric": 1.0, "slope": 0.5},
    )  # fmt: skip
    order = [key for key, _, _ in stat_rows(result)]
    assert order == [
        "slope",
        "intercept",
        "p_of_f",
        "adjusted_r_squared",
        "ci_intercept_high",
        "zeta_metric",
    ]


def test_the_order_is_the_same_under_any_string_hashing() -> None:
    orders = set()
    for seed in ("1", "2", "3", "4"):
        done = subprocess.run(
            [sys.executable, "-c", _PROBE],
            capture_output=True,
            text=True,
            check=True,
            env={**os.environ, "PYTHONHASHSEED": seed},
        )
        orders.add(done.stdout.strip())
    assert len(orders) == 1
