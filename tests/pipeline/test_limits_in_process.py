"""One file is audited in the calling process, under the same limits a worker would have."""

from __future__ import annotations

import resource
import time

from auditor.pipeline.in_process import run_in_process
from auditor.pipeline.limits import Failure, FileLimits


def _sleep_forever(task: str) -> str:
    time.sleep(3600)
    return task


def _allocate_too_much(task: str) -> str:
    block = bytearray(64 * 1024**3)  # 64 GiB, far beyond the 2 GiB limit below
    return task + str(len(block))


def _stopped(task: str, failure: Failure) -> str:
    return f"{task} stopped: {failure.kind}: {failure.reason}"


def test_a_plain_task_returns_its_result() -> None:
    assert run_in_process(str.upper, "ok", FileLimits(), _stopped) == "OK"


def test_the_time_limit_stops_the_task_and_says_so() -> None:
    got = run_in_process(_sleep_forever, "slow.xlsx", FileLimits(seconds=0.3), _stopped)
    assert got.startswith("slow.xlsx stopped: time: ")
    assert "after 0.3 s" in got


def test_the_memory_limit_stops_the_task_and_is_lifted_afterwards() -> None:
    before = resource.getrlimit(resource.RLIMIT_AS)
    got = run_in_process(
        _allocate_too_much, "big.xlsx", FileLimits(memory_bytes=2 * 1024**3), _stopped
    )
    assert got.startswith("big.xlsx stopped: memory: ")
    assert "2 GiB" in got
    assert resource.getrlimit(resource.RLIMIT_AS) == before
