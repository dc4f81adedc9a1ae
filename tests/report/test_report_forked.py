"""audit.xlsx written by a forked child while the parent writes the other reports: the same
bytes as written in one process, a child's failure written again by the parent (so the error
surfaces there), and no child left behind when the parent's block fails or a Ctrl-C arrives
just after the fork."""

from __future__ import annotations

import os
import signal
import time
import zipfile
from pathlib import Path
from typing import BinaryIO

import pytest
from test_report_sample import sample_result

from auditor.model import AuditResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.report import forked, write_reports
from auditor.report.forked import forked_write
from auditor.report.output import atomic_output
from auditor.report.xlsx.workbook import XlsxReporter

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
CURVES_BOOK = BOOKS / "calib_bench_runs.xlsx"

pytestmark = pytest.mark.skipif(not forked.can_fork(), reason="needs os.fork")


def test_the_workbook_is_the_same_whether_forked_or_not(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    write_reports(sample_result(), tmp_path / "forked", ["xlsx", "json", "text"])
    monkeypatch.setattr(forked, "can_fork", lambda: False)
    write_reports(sample_result(), tmp_path / "here", ["xlsx", "json", "text"])
    write_reports(sample_result(), tmp_path / "alone", ["xlsx"])  # nothing to write beside it
    for name in ("audit.xlsx", "audit.json", "summary.txt"):
        assert (tmp_path / "forked" / name).read_bytes() == (tmp_path / "here" / name).read_bytes()
    alone = (tmp_path / "alone" / "audit.xlsx").read_bytes()
    assert alone == (tmp_path / "forked" / "audit.xlsx").read_bytes()
    assert sorted(os.listdir(tmp_path / "forked")) == ["audit.json", "audit.xlsx", "summary.txt"]


def test_a_rich_workbook_from_the_child_is_the_one_written_in_one_process(tmp_path: Path) -> None:
    # Calibration curves under the auto policy: detail sheets, charts and the Curves sheet.
    workbook = audit_workbook(CURVES_BOOK, load_policy("auto"))
    result = AuditResult("0.1.0", "auto", [workbook], "2000-01-01T00:00:00+00:00")
    write_reports(result, tmp_path, ["xlsx", "json"])
    here = tmp_path / "here.xlsx"
    with here.open("wb") as handle:
        XlsxReporter(folder=tmp_path).write(result, handle)  # this process, no child
    assert (tmp_path / "audit.xlsx").read_bytes() == here.read_bytes()
    with zipfile.ZipFile(here) as archive:
        assert b'name="Curves"' in archive.read("xl/workbook.xml")


def test_a_child_that_fails_is_replaced_by_the_parent(tmp_path: Path) -> None:
    parent = os.getpid()

    def write(handle: BinaryIO) -> None:
        handle.write(b"half of a file")
        if os.getpid() != parent:
            raise RuntimeError("the child broke")
        handle.write(b", and the rest")

    target = tmp_path / "audit.xlsx"
    with atomic_output(target) as handle, forked_write(write, handle):
        pass
    assert target.read_bytes() == b"half of a file, and the rest"


def test_a_failure_in_both_surfaces_in_the_parent_and_writes_nothing(tmp_path: Path) -> None:
    def write(handle: BinaryIO) -> None:
        handle.write(b"half")
        raise ValueError("no workbook today")

    with pytest.raises(ValueError, match="no workbook today"):
        with atomic_output(tmp_path / "audit.xlsx") as handle, forked_write(write, handle):
            pass
    assert os.listdir(tmp_path) == []


def test_an_error_in_the_parent_stops_the_child(tmp_path: Path) -> None:
    def write(handle: BinaryIO) -> None:
        handle.write(f"{os.getpid()}\n".encode())
        handle.flush()
        time.sleep(600)  # a child that would outlive the run if left alone

    target = tmp_path / "audit.xlsx"
    with pytest.raises(RuntimeError, match="parent broke"):
        with atomic_output(target) as handle, forked_write(write, handle):
            child = _child_pid(Path(handle.name))
            raise RuntimeError("parent broke")
    with pytest.raises(ProcessLookupError):  # killed and reaped
        os.kill(child, 0)
    assert os.listdir(tmp_path) == []


def test_ctrl_c_just_after_the_fork_stops_the_child(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # The interrupt is raised in the parent as the fork returns, before the block that stops
    # the child is entered; held back until then, it still stops the child.
    children: list[int] = []
    fork = os.fork

    def fork_then_interrupt() -> int:
        pid = fork()
        if pid:
            children.append(pid)
            os.kill(os.getpid(), signal.SIGINT)
        return pid

    def write(handle: BinaryIO) -> None:
        time.sleep(600)  # a child that would outlive the run if left alone

    monkeypatch.setattr(os, "fork", fork_then_interrupt)
    with pytest.raises(KeyboardInterrupt):
        with atomic_output(tmp_path / "audit.xlsx") as handle, forked_write(write, handle):
            pass
    monkeypatch.undo()
    assert len(children) == 1
    try:
        os.kill(children[0], 0)
    except ProcessLookupError:  # killed and reaped
        left = False
    else:
        left = True
        os.kill(children[0], signal.SIGKILL)  # not to hold up the test run
    assert not left
    assert os.listdir(tmp_path) == []


def _child_pid(part: Path) -> int:
    """The pid the child wrote first into its file (waits until it is there)."""
    while not part.read_bytes().endswith(b"\n"):
        time.sleep(0.01)
    return int(part.read_bytes())
