"""The review page's plots drawn by several processes are the ones drawn one by one, in page
order, with an empty text where a regression cannot be plotted."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.report.forked import can_fork
from auditor.report.html_many import draw_plots
from auditor.report.html_plots import can_plot, regression_svg

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
NAMES = ["lab_clean_reference.xlsx", "lab_p_value_slips.xlsx", "ops_se_slips.xlsx"]


@pytest.mark.skipif(not can_fork(), reason="the plots are drawn by forked processes")
def test_plots_drawn_in_parallel_are_those_drawn_one_by_one() -> None:
    policy = load_policy("general")
    regressions = [r for name in NAMES for r in audit_workbook(BOOKS / name, policy).regressions]
    # One that cannot be plotted (several x columns), in the middle of the page.
    middle = len(regressions) // 2
    regressions.insert(middle, dataclasses.replace(regressions[0], x_columns=2))
    assert not can_plot(regressions[middle])
    assert sum(map(can_plot, regressions)) >= 8  # enough for two processes
    one_by_one = [regression_svg(r) for r in regressions]
    assert one_by_one[middle] == "" and all(one_by_one[:middle])
    assert draw_plots(regressions, processes=2) == one_by_one
    assert draw_plots(regressions, processes=1) == one_by_one
