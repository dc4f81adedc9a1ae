"""A batch of workbooks: each audited in a worker under per-file time and memory limits, results
reused from the ledger for unchanged files (``--changed``), a progress bar on a terminal.

A broken file becomes an ``unreadable`` result with its reason and the batch goes on; a file that
exceeds a limit is stopped, reported in words, and tried again on the next run.
"""

from __future__ import annotations

import contextlib
import sys
import time
import traceback
from collections.abc import Callable, Generator, Iterator, Sequence
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, Any

from auditor import __version__
from auditor.errors import RegauditError
from auditor.model import WorkbookResult
from auditor.pipeline.in_process import run_in_process
from auditor.pipeline.limits import Failure, FileLimits, default_jobs, run_limited
from auditor.policy import Policy
from auditor.read.open import sha256_of

if TYPE_CHECKING:
    from auditor.pipeline.ledger import Ledger

Task = tuple[str, Policy, list[dict[str, Any]] | None]
DEFAULT_LIMITS = FileLimits()  # 600 s and 4 GiB per file


def audit_guarded(
    path: str, policy: Policy, bindings: list[dict[str, Any]] | None
) -> WorkbookResult:
    """audit_workbook, with a broken file and a fault of regaudit's each told apart in words;
    MemoryError goes on to the caller (the pool reports it as the per-file limit)."""
    from auditor.pipeline.audit import audit_workbook

    try:
        return audit_workbook(path, policy, bindings)
    except MemoryError:
        raise
    except RegauditError as exc:
        return WorkbookResult(path, "", "unreadable", error=str(exc), failure="file")
    except Exception as exc:  # a bug: keep the traceback, keep the batch going
        traceback.print_exc(file=sys.stderr)
        return WorkbookResult(
            path,
            sha256_of(Path(path)) if Path(path).is_file() else "",
            "unreadable",
            error=f"regaudit failed while auditing it ({type(exc).__name__}: {exc}); the file "
            "itself may be fine: please report this, with the traceback printed above",
            failure="regaudit",
        )


def _audit_one(args: Task) -> WorkbookResult:
    path, policy, bindings = args
    return audit_guarded(path, policy, bindings)


def _audit_timed(args: Task) -> tuple[WorkbookResult, float]:
    started = time.perf_counter()
    result = _audit_one(args)
    return result, time.perf_counter() - started


def _audit_recorded(args: Task, points: str = "all") -> tuple[WorkbookResult, float, str | None]:
    """The audit and, made here in the worker rather than in the parent, its ledger record,
    holding the data points the run's reports show (``points``: see ``iter_audits``)."""
    from auditor.pipeline.resultjson import dumps

    result, seconds = _audit_timed(args)
    return result, seconds, dumps(result, points)


def _without_unread_points(work: Callable[[Task], tuple[Any, ...]], args: Task) -> tuple[Any, ...]:
    """``work(args)`` with the data points of every regression without a finding left out: a
    worker's result crosses a pipe, and its points (one record per row) are nearly all of its
    size, while only a detail sheet shows them. The ledger record, made before, keeps the same
    points (``resultjson.dumps(result, "findings")``)."""
    outcome = work(args)
    for regression in outcome[0].regressions:
        if not regression.findings:
            regression.data = []
    return outcome


def _stopped(args: Task, failure: Failure) -> tuple[WorkbookResult, float]:
    path = Path(args[0])
    digest = sha256_of(path) if path.is_file() else ""
    stopped = WorkbookResult(str(path), digest, "unreadable", error=failure.reason, failure="limit")
    return stopped, -1.0


def _stopped_recorded(args: Task, failure: Failure) -> tuple[WorkbookResult, float, str | None]:
    return (*_stopped(args, failure), None)


def largest_first(paths: Sequence[Path]) -> list[int]:
    """The indices of ``paths``, largest file first (ties and unreadable sizes in input order).

    Workers take files in this order: a big file started last would keep one worker busy while
    the others have nothing left (on 25 real workbooks, 2 workers: 2.56 s → 2.09 s of audit,
    the least the longest file allows). The size is only a guess of the work, but a cheap one,
    and the results still come back in the order of ``paths``."""

    def size(index: int) -> int:
        try:
            return Path(paths[index]).stat().st_size
        except OSError:
            return 0  # the worker reports what is wrong with it

    return sorted(range(len(paths)), key=lambda index: -size(index))


def iter_audits(
    paths: Sequence[Path],
    policy: Policy,
    bindings: list[dict[str, Any]] | None = None,
    jobs: int | None = None,
    limits: FileLimits = DEFAULT_LIMITS,
    records: bool = False,
    points: str = "all",
) -> Iterator[tuple[Any, ...]]:
    """(index, result, seconds, reusable) as files finish (``index`` into ``paths``; with workers
    the largest files are started first, see ``largest_first``); jobs=0 runs in-process in
    order, no limits.
    With ``records`` each tuple ends with the result's ledger record, made by the worker. With
    ``points="findings"`` a result from a worker, and every record, keeps the data points of the
    regressions with a finding only (those a detail sheet shows); "all" keeps every one."""
    tasks: list[Task] = [(str(p), policy, bindings) for p in paths]
    work: Callable[[Task], tuple[Any, ...]] = _audit_timed
    if records:
        work = partial(_audit_recorded, points=points)
    stopped_work = _stopped_recorded if records else _stopped
    if jobs == 0:
        for index, task in enumerate(tasks):
            result, seconds, *record = work(task)
            yield index, result, seconds, True, *record
        return
    if len(tasks) == 1:  # one file: no worker to start, no result to send back
        outcome: tuple[Any, ...] = run_in_process(work, tasks[0], limits, stopped_work)
        outcomes: Iterator[tuple[int, tuple[Any, ...]]] = iter([(0, outcome)])
    else:
        workers = default_jobs() if jobs is None else jobs
        if points == "findings":
            work = partial(_without_unread_points, work)
        order = largest_first(paths)
        given = run_limited(work, [tasks[i] for i in order], workers, limits, stopped_work)
        outcomes = ((order[index], outcome) for index, outcome in given)
    for index, (result, seconds, *record) in outcomes:
        stopped = seconds < 0  # stopped by a limit: not reused, tried again next run
        yield index, result, (limits.seconds or 0.0) if stopped else seconds, not stopped, *record


def audit_batch(
    paths: Sequence[Path],
    policy: Policy,
    bindings: list[dict[str, Any]] | None = None,
    jobs: int | None = None,
    *,
    ledger: Ledger | None = None,
    changed: bool = False,
    limits: FileLimits = DEFAULT_LIMITS,
    progress: bool = False,
    points: str = "all",
    meanwhile: Callable[[], object] | None = None,
) -> list[WorkbookResult]:
    """Results in the order of ``paths`` (``points``: see ``iter_audits``). ``meanwhile`` is
    called once, when the first result of several is in: work of the caller's own (the
    reporters' imports) done while the workers audit the rest, rather than after the last."""

    def audit_many(subset: Sequence[Path]) -> Iterator[tuple[Any, ...]]:
        recorded = ledger is not None
        return iter_audits(subset, policy, bindings, jobs, limits, recorded, points)

    if ledger is None:
        stream: Generator[tuple[int, WorkbookResult]] = ((i, r) for i, r, *_ in audit_many(paths))
    else:
        from auditor.pipeline.ledger import (  # SQLite, if used
            AuditKey,
            audit_with_ledger,
            settings_digest,
        )

        key = AuditKey(policy.name, settings_digest(policy, bindings), __version__)
        stream = audit_with_ledger(list(paths), audit_many, ledger, key, changed, points)
    bar = _progress_bar(len(paths)) if progress else None
    results: list[WorkbookResult | None] = [None] * len(paths)
    # Closed on the way out, whatever ends the loop (Ctrl-C while a result is recorded): the
    # workers are stopped then, not whenever the generators are collected.
    with contextlib.closing(stream):
        for index, result in stream:
            results[index] = result
            if bar is not None:
                bar.update()
            if meanwhile is not None and len(paths) > 1:  # others still on their way
                meanwhile()
                meanwhile = None
    if bar is not None:
        bar.close()
    return [r for r in results if r is not None]


def _progress_bar(total: int) -> Any:
    if total < 2 or not sys.stderr.isatty():
        return None  # quiet when stderr is a file or CI
    from tqdm import tqdm

    return tqdm(total=total, unit="file", desc="auditing", file=sys.stderr, leave=False)
