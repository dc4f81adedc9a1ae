"""The limited pool: a stuck, greedy or crashing file is stopped and reported, the rest finish."""

from __future__ import annotations

import os
import time
from pathlib import Path

import pytest

from auditor.pipeline.audit import audit_workbook
from auditor.pipeline.limits import Failure, FileLimits, default_jobs, run_limited
from auditor.policy import load_policy

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="the pool tests fork workers")
FIXTURE = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def work(task: tuple[str, int]) -> str:
    kind, size = task
    if kind == "stuck":
        time.sleep(3600)
    if kind == "greedy":
        return str(len(bytearray(size)))
    if kind == "crash":
        os._exit(7)
    if kind == "killed":
        os.kill(os.getpid(), 9)
    if kind == "bug":
        raise ValueError("a bug in the task")
    return f"done {size}"


def failed(task: tuple[str, int], failure: Failure) -> str:
    return f"{failure.kind}: {failure.reason}"


def test_each_misbehaving_task_is_stopped_and_named() -> None:
    tasks = [
        ("ok", 1), ("stuck", 0), ("greedy", 6 * 1024**3), ("crash", 0), ("ok", 2),
        ("killed", 0), ("bug", 0), ("ok", 3), ("greedy", 10_000),
    ]  # fmt: skip
    limits = FileLimits(seconds=1.5, memory_bytes=2 * 1024**3)
    results = dict(run_limited(work, tasks, 2, limits, failed))
    assert sorted(results) == list(range(len(tasks)))
    assert results[0] == "done 1" and results[4] == "done 2" and results[7] == "done 3"
    assert results[1].startswith("time: ") and "1.5 s" in results[1]
    assert results[2].startswith("memory: ") and "2 GiB" in results[2]
    assert results[3] == "crash: the worker stopped unexpectedly (exit code 7)"
    assert results[5].startswith("crash: the worker was stopped by signal 9")
    assert results[6] == "crash: the audit failed inside the worker (ValueError: a bug in the task)"
    assert results[8] == "10000"  # the worker that met a MemoryError is still of use


def test_results_come_back_for_every_task_with_more_workers_than_tasks() -> None:
    results = dict(run_limited(work, [("ok", 5)], 4, FileLimits(), failed))
    assert results == {0: "done 5"}
    assert dict(run_limited(work, [], 2, FileLimits(), failed)) == {}


def audit_fixture(name: str) -> str:
    if name == "stuck":
        time.sleep(3600)
    return audit_workbook(FIXTURE / name, load_policy("general")).status


def test_a_stuck_file_does_not_hold_up_real_audits() -> None:
    names = sorted(p.name for p in FIXTURE.glob("*.xlsx"))[:6]
    tasks = names[:3] + ["stuck"] + names[3:]
    results = dict(run_limited(audit_fixture, tasks, 2, FileLimits(seconds=6.0), failed))
    assert results[3].startswith("time: ")
    assert [results[i] for i in range(len(tasks)) if i != 3] == ["audited"] * len(names)


def test_default_jobs_is_the_cores_this_process_may_use() -> None:
    assert default_jobs() == len(os.sched_getaffinity(0))


def frozen_in_worker(_task: int) -> int:
    import gc

    return gc.get_freeze_count()


def test_workers_inherit_a_frozen_heap_and_the_parent_gets_its_own_back() -> None:
    import gc

    before = gc.get_freeze_count()
    seen = dict(run_limited(frozen_in_worker, [0, 1, 2], 2, FileLimits(), failed))
    assert all(count > 1000 for count in seen.values())  # the imported modules' objects, at least
    assert gc.get_freeze_count() == before
