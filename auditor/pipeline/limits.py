"""Per-file time and memory limits for a batch: a small process pool that can stop one file.

``concurrent.futures.ProcessPoolExecutor`` cannot stop a single task: killing a worker breaks the
whole pool. Here every worker has its own pipe, so the parent always knows which file each worker
holds. A file that runs past its time limit has its worker killed and replaced; a worker that
dies (the kernel's out-of-memory killer, a crash in a C extension) is replaced too; either way
that one file is reported through ``on_failure`` with the reason in words, and the rest of the
batch goes on. Memory is capped per worker with ``RLIMIT_AS`` set in the worker itself, so an
allocation beyond it raises ``MemoryError`` in that worker instead of exhausting the machine.

    for index, outcome in run_limited(audit_one, tasks, jobs=2, limits=FileLimits(60, 2**31)):
        ...  # results arrive as files finish, not in input order
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Generic, TypeVar

from auditor.pipeline.collector import frozen
from auditor.processes import can_fork, ignore_interrupts, interrupts_held, usable_cores

if TYPE_CHECKING:  # multiprocessing is imported when a pool starts: one file needs none
    from multiprocessing.connection import Connection

T = TypeVar("T")
R = TypeVar("R")

KILL_GRACE_SECONDS = 2.0  # after SIGTERM, before SIGKILL


@dataclass(frozen=True)
class FileLimits:
    """What one file may use. ``None`` means no limit."""

    seconds: float | None = 600.0  # wall-clock per file
    memory_bytes: int | None = 4 * 1024**3  # address space per worker process


def default_jobs() -> int:
    """One worker per core this process may run on (``processes.usable_cores``)."""
    return usable_cores()


@dataclass
class Failure:
    """Why a task produced no result: ``kind`` is "time", "memory" or "crash"."""

    kind: str
    reason: str


def _limit_memory(memory_bytes: int | None) -> None:
    if memory_bytes is None:
        return
    import resource

    _soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    if hard != resource.RLIM_INFINITY:
        memory_bytes = min(memory_bytes, hard)
    resource.setrlimit(resource.RLIMIT_AS, (memory_bytes, hard))


def _serve(fn: Callable[[Any], Any], conn: Connection, memory_bytes: int | None) -> None:
    """A worker: take (index, task), send back (index, "ok" | "memory" | "error", payload)."""
    # Ctrl-C reaches the whole process group: the parent alone decides, and stops the workers.
    ignore_interrupts()  # SIGINT came blocked from the parent (see _Pool.start)
    _limit_memory(memory_bytes)
    while True:
        try:
            message = conn.recv()
        except (EOFError, OSError):
            return
        if message is None:
            return
        index, task = message
        try:
            reply = (index, "ok", fn(task))
        except MemoryError:
            reply = (index, "memory", "")
        except Exception as exc:  # a bug in fn: report it, keep the worker
            reply = (index, "error", f"{type(exc).__name__}: {exc}")
        conn.send(reply)


@dataclass
class _Worker:
    process: Any  # multiprocessing.Process (BaseProcess)
    conn: Connection
    index: int | None = None  # the task it holds
    deadline: float | None = None


class _Pool(Generic[T, R]):
    def __init__(self, fn: Callable[[T], R], jobs: int, limits: FileLimits, context: Any) -> None:
        self.fn, self.jobs, self.limits, self.context = fn, jobs, limits, context
        self.workers: list[_Worker] = []

    def start(self) -> _Worker:
        parent, child = self.context.Pipe(duplex=True)
        process = self.context.Process(
            target=_serve, args=(self.fn, child, self.limits.memory_bytes), daemon=True
        )
        # A Ctrl-C during the start is held back until the worker is on the list, so close()
        # stops it (an unlisted one outlives the run, holding the console open).
        with interrupts_held():
            process.start()
            child.close()
            worker = _Worker(process, parent)
            self.workers.append(worker)
        return worker

    def give(self, worker: _Worker, index: int, task: T) -> None:
        worker.index = index
        seconds = self.limits.seconds
        worker.deadline = None if seconds is None else time.monotonic() + seconds
        worker.conn.send((index, task))

    def retire(self, worker: _Worker) -> None:
        """Stop ``worker`` for good (it overran, or died) and forget it."""
        self.workers.remove(worker)
        worker.conn.close()
        if worker.process.is_alive():
            worker.process.terminate()
            worker.process.join(KILL_GRACE_SECONDS)
            if worker.process.is_alive():
                worker.process.kill()
        worker.process.join()

    def close(self) -> None:
        for worker in list(self.workers):
            try:
                worker.conn.send(None)
            except OSError:
                pass
        for worker in list(self.workers):
            worker.process.join(KILL_GRACE_SECONDS)
            self.retire(worker)


def _describe_exit(code: int | None) -> str:
    if code is not None and code < 0:
        return f"the worker was stopped by signal {-code} (often the system running out of memory)"
    return f"the worker stopped unexpectedly (exit code {code})"


def run_limited(
    fn: Callable[[T], R],
    tasks: Sequence[T],
    jobs: int,
    limits: FileLimits,
    on_failure: Callable[[T, Failure], R],
    context: Any = None,
) -> Iterator[tuple[int, R]]:
    """Run ``fn`` over ``tasks`` in ``jobs`` worker processes within ``limits``; yield
    ``(index, result)`` as each finishes. A task stopped by a limit, or whose worker died, yields
    ``on_failure(task, Failure)``. ``fn`` must be picklable (a module-level function)."""
    if not tasks:
        return
    from multiprocessing.connection import wait

    pool: _Pool[T, R] = _Pool(fn, max(1, min(jobs, len(tasks))), limits, context or _context())
    pending = list(range(len(tasks)))[::-1]  # popped from the end: input order
    # What the workers inherit (every imported module's objects) is frozen before they fork, as
    # the gc module advises for a process that forks without exec: a worker's full collections
    # then leave those objects, and the memory pages they share with this process, alone.
    with frozen():
        try:
            for _ in range(pool.jobs):
                first = pending.pop()
                pool.give(pool.start(), first, tasks[first])
            while any(w.index is not None for w in pool.workers):
                deadlines = [w.deadline for w in pool.workers if w.deadline is not None]
                timeout = max(0.0, min(deadlines) - time.monotonic()) if deadlines else None
                handles: list[Any] = [w.conn for w in pool.workers]
                handles += [w.process.sentinel for w in pool.workers]
                ready = wait(handles, timeout)
                for worker in list(pool.workers):
                    outcome = _outcome(worker, ready, limits)
                    if outcome is None or worker.index is None:
                        continue
                    index = worker.index
                    if isinstance(outcome, Failure):
                        result = on_failure(tasks[index], outcome)
                        if outcome.kind != "memory":  # a MemoryError leaves the worker usable
                            pool.retire(worker)
                            if pending:
                                worker = pool.start()
                    else:
                        result = outcome[0]
                    worker.index = worker.deadline = None
                    # The next file first, then the result: the worker audits while the caller
                    # records this one, instead of waiting for it.
                    if pending and worker in pool.workers:
                        following = pending.pop()
                        pool.give(worker, following, tasks[following])
                    yield index, result
        finally:
            pool.close()


def _outcome(worker: _Worker, ready: list[Any], limits: FileLimits) -> tuple[Any] | Failure | None:
    """The finished task's (result,), a Failure, or None while it is still running."""
    if worker.index is None:
        return None
    if worker.conn in ready:
        try:
            got, status, payload = worker.conn.recv()
        except (EOFError, OSError):
            return Failure("crash", _describe_exit(_exit_code(worker)))
        if status == "ok" and got == worker.index:
            return (payload,)
        if status == "memory":
            return Failure("memory", _memory_reason(limits))
        return Failure("crash", f"the audit failed inside the worker ({payload})")
    if worker.process.sentinel in ready:
        return Failure("crash", _describe_exit(_exit_code(worker)))
    if worker.deadline is not None and time.monotonic() >= worker.deadline:
        return Failure("time", _time_reason(limits))
    return None


def _exit_code(worker: _Worker) -> int | None:
    worker.process.join(0.5)
    code: int | None = worker.process.exitcode
    return code


def _time_reason(limits: FileLimits) -> str:
    return (
        f"the audit of this file was stopped after {limits.seconds:g} s (the per-file time "
        "limit); the file may be pathological: audit it alone with a longer limit"
    )


def _memory_reason(limits: FileLimits) -> str:
    size = "" if limits.memory_bytes is None else f" of {limits.memory_bytes / 1024**3:g} GiB"
    return (
        f"the audit of this file ran out of memory (the per-file limit{size}); audit it alone "
        "with a higher limit, or on a larger machine"
    )


def _context() -> Any:
    """fork starts a worker in milliseconds with regaudit already imported. Where forking is
    unsafe (``processes.can_fork``) a fork server, itself single-threaded, forks the workers;
    spawn where neither exists."""
    import multiprocessing

    methods = multiprocessing.get_all_start_methods()
    if "fork" in methods and can_fork():
        return multiprocessing.get_context("fork")
    if "forkserver" in methods:
        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload(["auditor.pipeline.audit"])
        return context
    return multiprocessing.get_context("spawn")
