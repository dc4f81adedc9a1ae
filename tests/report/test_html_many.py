"""The review page's plots drawn by several processes are the ones drawn one by one, in page
order, with an empty text where a regression cannot be plotted; a Ctrl-C at any moment of the
drawing pool's making leaves no drawing process behind."""

from __future__ import annotations

import dataclasses
import os
import subprocess
import sys
from pathlib import Path

import pytest

from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.processes import can_fork
from auditor.report.html_many import draw_plots
from auditor.report.html_plots import can_plot, regression_svg

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
NAMES = ["lab_clean_reference.xlsx", "lab_p_value_slips.xlsx", "ops_se_slips.xlsx"]


def _regressions() -> list[RegressionResult]:
    policy = load_policy("general")
    return [r for name in NAMES for r in audit_workbook(BOOKS / name, policy).regressions]


@pytest.mark.skipif(not can_fork(), reason="the plots are drawn by forked processes")
def test_plots_drawn_in_parallel_are_those_drawn_one_by_one() -> None:
    regressions = _regressions()
    # One that cannot be plotted (several x columns), in the middle of the page.
    middle = len(regressions) // 2
    regressions.insert(middle, dataclasses.replace(regressions[0], x_columns=2))
    assert not can_plot(regressions[middle])
    assert sum(map(can_plot, regressions)) >= 8  # enough for two processes
    one_by_one = [regression_svg(r) for r in regressions]
    assert one_by_one[middle] == "" and all(one_by_one[:middle])
    assert draw_plots(regressions, processes=2) == one_by_one
    assert draw_plots(regressions, processes=1) == one_by_one


# Run in a process of its own: drawing processes left behind would hold up the end of the test
# run itself (as they held up a CI run for two minutes), where here they are counted and killed.
INTERRUPTED_WHILE_STARTING = """
import multiprocessing, os, signal, sys, threading
from test_html_many import _regressions
from auditor.report.html_many import draw_plots

regressions = _regressions()
start = threading.Thread.start
for at_thread in (1, 2, 3):
    started = 0

    def start_and_interrupt(thread):
        global started
        started += 1
        if started == at_thread:
            os.kill(os.getpid(), signal.SIGINT)
        start(thread)

    threading.Thread.start = start_and_interrupt
    try:
        draw_plots(regressions, processes=2)
        outcome = "finished"
    except KeyboardInterrupt:
        outcome = "interrupted"
    threading.Thread.start = start
    left = multiprocessing.active_children()
    print(at_thread, outcome, len(left), flush=True)
    for child in left:
        os.kill(child.pid, signal.SIGKILL)
os._exit(0)
"""


@pytest.mark.skipif(not can_fork(), reason="the plots are drawn by forked processes")
def test_ctrl_c_while_the_pool_starts_leaves_no_drawing_process() -> None:
    # The pool forks its drawing processes, then starts three threads of its own. A Ctrl-C
    # during those starts once escaped the block that stops the pool: the drawing processes,
    # which leave Ctrl-C to the parent, outlived the run. The interrupt is sent as each of the
    # three threads starts; each time draw_plots is interrupted and no drawing process is left.
    here = str(Path(__file__).parent)
    path = os.pathsep.join([here, os.environ.get("PYTHONPATH", "")])
    done = subprocess.run(
        [sys.executable, "-c", INTERRUPTED_WHILE_STARTING],
        capture_output=True,
        text=True,
        timeout=300,
        env={**os.environ, "PYTHONPATH": path},
        start_new_session=True,
    )
    assert done.stdout.split("\n")[:3] == ["1 interrupted 0", "2 interrupted 0", "3 interrupted 0"]
