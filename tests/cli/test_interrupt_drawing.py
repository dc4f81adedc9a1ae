"""Ctrl-C while review.html's plots are drawn by several processes: exit 130, one line on
stderr (not a traceback from each drawing process), no report written."""

from __future__ import annotations

import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from auditor.processes import can_fork, usable_cores

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def _processes(group: int) -> int:
    found = subprocess.run(["pgrep", "-g", str(group)], capture_output=True, text=True)
    return len(found.stdout.split())


@pytest.mark.skipif(
    not can_fork() or usable_cores() < 2 or shutil.which("pgrep") is None,
    reason="needs forked drawing processes on two cores and pgrep to see them",
)
def test_ctrl_c_while_plots_are_drawn_gives_one_line(tmp_path: Path) -> None:
    out = tmp_path / "out"
    command = [sys.executable, "-m", "auditor", "audit", str(FIXTURES), "--out", str(out)]
    command += ["--format", "json,html", "--no-ledger", "--jobs", "1"]
    process = subprocess.Popen(
        command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, start_new_session=True
    )
    # One file at a time is audited by one worker: three processes in the group only once the
    # page's drawing processes run (wait by condition, not by a fixed delay).
    for _ in range(1200):
        if process.poll() is not None or _processes(process.pid) >= 3:
            break
        time.sleep(0.02)
    if process.poll() is not None:
        pytest.skip("the run finished before the drawing could be interrupted")
    os.killpg(process.pid, signal.SIGINT)
    try:
        _, err = process.communicate(timeout=120)
    except subprocess.TimeoutExpired:
        os.killpg(process.pid, signal.SIGKILL)
        process.communicate()
        pytest.fail("regaudit did not stop after Ctrl-C")
    text = err.decode("utf-8")
    assert process.returncode == 130, text
    lines = [line for line in text.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("interrupted:"), text
    assert not (out / "review.html").exists() and not (out / "audit.json").exists()
