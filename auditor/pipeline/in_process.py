"""One file audited in this process under the same per-file limits as a worker (a timer and an
address-space limit, both restored afterwards): no worker start-up for a single file."""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import TypeVar

from auditor.pipeline.limits import (
    Failure,
    FileLimits,
    _limit_memory,
    _memory_reason,
    _time_reason,
    run_limited,
)

T = TypeVar("T")
R = TypeVar("R")


class _TimeUp(BaseException):
    """Raised by the interval timer inside an in-process run (not an Exception: no handler of
    the audit's own may swallow it)."""


def run_in_process(
    fn: Callable[[T], R], task: T, limits: FileLimits, on_failure: Callable[[T, Failure], R]
) -> R:
    """``fn(task)`` in this process within ``limits``: one file needs no worker.

    The time limit is an interval timer (SIGALRM) and the memory limit the same ``RLIMIT_AS``
    a worker sets, lowered for the run and restored after it, so a file stopped here is
    reported in the words the pool uses. Off the main thread (no signals there) the task goes
    to a one-worker pool instead.
    """
    import resource
    import signal

    if threading.current_thread() is not threading.main_thread():
        return next(run_limited(fn, [task], 1, limits, on_failure))[1]

    def time_up(_signum: int, _frame: object) -> None:
        raise _TimeUp

    previous_handler = signal.signal(signal.SIGALRM, time_up) if limits.seconds else None
    previous_memory = resource.getrlimit(resource.RLIMIT_AS)
    try:
        _limit_memory(limits.memory_bytes)
        if limits.seconds:
            signal.setitimer(signal.ITIMER_REAL, limits.seconds)
        try:
            return fn(task)
        finally:
            if limits.seconds:
                signal.setitimer(signal.ITIMER_REAL, 0)
            resource.setrlimit(resource.RLIMIT_AS, previous_memory)
    except _TimeUp:
        return on_failure(task, Failure("time", _time_reason(limits)))
    except MemoryError:
        return on_failure(task, Failure("memory", _memory_reason(limits)))
    finally:
        if previous_handler is not None:
            signal.signal(signal.SIGALRM, previous_handler)
