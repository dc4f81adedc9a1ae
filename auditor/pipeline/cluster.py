"""Batches on a Dask cluster: one task per workbook, the same results as a local run.

    --cluster tcp://host:8786   a running ``dask scheduler`` with ``dask worker`` processes
    --cluster local:N           a LocalCluster of N worker processes on this machine

Each task calls :func:`auditor.pipeline.audit.audit_workbook` on one file, so a workbook gets the
same
reading limits and the same result as in a local run. Workers read the file from a path they
share with the client (it is sent as an absolute path), or, with ``ship_bytes``, receive its
bytes and audit a private temporary copy that bears the original's file name. Either way the
result names the path as the client collected it, and error texts are given that path too.

At most a few tasks per worker thread are in flight at once, so a very large share of
workbooks does not hold every file's bytes in the client's memory. Dask is an optional extra
(``pip install 'regaudit[cluster]'``) imported only here and only when asked for.
"""

from __future__ import annotations

import logging
import os
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from auditor import __version__
from auditor.errors import UsageError
from auditor.model import WorkbookResult
from auditor.policy import Policy

INSTALL_HINT = "pip install 'regaudit[cluster]'"
CONNECT_SECONDS = 20  # to reach the scheduler; a wrong address should fail fast, not hang
WORKER_WAIT_SECONDS = 60  # for the first worker to join a scheduler that has none yet
TASKS_PER_THREAD = 4  # enough to keep workers busy between two round trips


@dataclass(frozen=True)
class ClusterTarget:
    address: str | None = None  # a scheduler, e.g. "tcp://10.0.0.5:8786"
    local_workers: int = 0  # > 0 for "local:N"


@dataclass(frozen=True)
class _Settings:
    # Scattered once to every worker instead of being pickled into each task.
    policy: Policy
    bindings: list[dict[str, Any]] | None


def parse_cluster(value: str) -> ClusterTarget:
    """``local:N`` or a scheduler address; anything else is a UsageError saying what to write."""
    text = value.strip()
    if text.lower().startswith("local"):
        _, colon, count = text.partition(":")
        if colon and count.isdigit() and int(count) >= 1:
            return ClusterTarget(local_workers=int(count))
        raise UsageError(
            f"--cluster {value!r}: write local:N with N a whole number of workers, e.g. local:4"
        )
    if not text or any(ch.isspace() for ch in text):
        raise UsageError(
            f"--cluster {value!r} is not a scheduler address; give one such as "
            "tcp://scheduler-host:8786, or local:N for N workers on this machine"
        )
    return ClusterTarget(address=text)


def _distributed() -> Any:
    try:
        import distributed
    except ImportError as exc:
        raise UsageError(
            f"--cluster needs Dask's distributed scheduler, which is not installed; "
            f"install it with: {INSTALL_HINT}"
        ) from exc
    return distributed


@contextmanager
def connect(target: ClusterTarget) -> Iterator[Any]:
    """A ``distributed.Client`` for ``target`` with at least one worker; closed afterwards."""
    distributed = _distributed()
    if target.local_workers:
        with (
            distributed.LocalCluster(
                n_workers=target.local_workers,
                threads_per_worker=1,  # the audit is pure Python: processes, not threads, scale it
                processes=True,
                dashboard_address=":0",  # a free port: 8787 may be taken by another cluster
                silence_logs=logging.ERROR,
            ) as cluster,
            distributed.Client(cluster) as client,
        ):
            yield client
        return
    try:
        client = distributed.Client(target.address, timeout=CONNECT_SECONDS)
    except (OSError, TimeoutError, ValueError) as exc:
        raise UsageError(
            f"cannot reach a Dask scheduler at {target.address!r} ({exc}); start one with "
            "'dask scheduler' and workers with 'dask worker ADDRESS', or check the address"
        ) from exc
    with client:
        try:
            client.wait_for_workers(1, timeout=WORKER_WAIT_SECONDS)
        except TimeoutError as exc:
            raise UsageError(
                f"the scheduler at {target.address!r} has no workers after "
                f"{WORKER_WAIT_SECONDS} s; start some with 'dask worker {target.address}'"
            ) from exc
        yield client


def worker_version() -> str:
    """Run on each worker: the regaudit it imports (must equal the client's)."""
    return __version__


def check_workers(client: Any) -> None:
    """Refuse workers that lack regaudit or run another version: their results would differ."""
    try:
        versions = client.run(worker_version)
    except Exception as exc:  # what a worker raises comes back as its own exception type
        raise UsageError(
            f"the Dask workers cannot run regaudit ({type(exc).__name__}: {exc}); install the "
            f"same regaudit on every worker, e.g. {INSTALL_HINT}"
        ) from exc
    wrong = {worker: v for worker, v in versions.items() if v != __version__}
    if wrong:
        worker, version = sorted(wrong.items())[0]
        raise UsageError(
            f"worker {worker} runs regaudit {version!r} but this client runs {__version__!r}; "
            "install the same version on every worker so that results agree"
        )


def _audit(path: Path, shown: str, settings: _Settings) -> WorkbookResult:
    """audit_workbook with the same error handling as a local batch, naming ``shown``."""
    from auditor.pipeline.batch import audit_guarded

    result = audit_guarded(str(path), settings.policy, settings.bindings)
    result.path = shown
    if result.error:
        result.error = result.error.replace(str(path), shown)
    return result


def audit_shared_path(absolute: str, shown: str, settings: _Settings) -> WorkbookResult:
    """Task: audit a file the worker reads from a shared path."""
    if not os.path.isfile(absolute):
        return WorkbookResult(
            shown,
            "",
            "unreadable",
            error=f"{shown} is not visible on the Dask worker as {absolute!r}; put the "
            "workbooks on a path every worker shares, or use --ship-bytes",
            failure="file",
        )
    return _audit(Path(absolute), shown, settings)


def audit_shipped_bytes(content: bytes, shown: str, settings: _Settings) -> WorkbookResult:
    """Task: audit bytes sent by the client, from a temporary copy with the original's name."""
    with tempfile.TemporaryDirectory(prefix="regaudit-") as folder:
        copy = Path(folder) / Path(shown).name
        copy.write_bytes(content)
        return _audit(copy, shown, settings)


def _readable_bytes(path: Path) -> bytes | None:
    try:
        return path.read_bytes()  # read only; the input file is never changed
    except OSError:
        return None


def _lost(shown: str, exc: BaseException) -> WorkbookResult:
    return WorkbookResult(
        shown,
        "",
        "unreadable",
        error=f"the cluster could not audit it ({type(exc).__name__}: {exc}); run it again, "
        "or audit this file locally to see why",
        failure="cluster",
    )


def audit_on_cluster(
    paths: list[Path],
    policy: Policy,
    bindings: list[dict[str, Any]] | None = None,
    cluster: str = "local:2",
    ship_bytes: bool = False,
) -> list[WorkbookResult]:
    """Audit ``paths`` on a Dask cluster; results in the order of ``paths``, as audit_batch."""
    target = parse_cluster(cluster)
    distributed = _distributed()
    if not paths:
        return []
    with connect(target) as client:
        check_workers(client)
        local_settings = _Settings(policy, bindings)
        settings = client.scatter(local_settings, broadcast=True)
        threads = sum(client.nthreads().values()) or 1
        window = max(2, TASKS_PER_THREAD * threads)
        results: dict[int, WorkbookResult] = {}
        keys: dict[str, tuple[int, str]] = {}
        pending = iter(enumerate(Path(p) for p in paths))
        running = distributed.as_completed()

        def submit_next() -> bool:
            for index, path in pending:
                shown = str(path)
                content = _readable_bytes(path) if ship_bytes else None
                if not path.is_file() or (ship_bytes and content is None):
                    # The client cannot read it either: audit it here, in the local run's words.
                    results[index] = _audit(path, shown, local_settings)
                    continue
                if content is not None:
                    # Scattered rather than put into the task itself, which Dask warns
                    # against for large objects and would keep in the scheduler's graph.
                    data = client.scatter(content, hash=False)
                    future = client.submit(audit_shipped_bytes, data, shown, settings, pure=False)
                else:
                    absolute = os.path.abspath(path)
                    future = client.submit(audit_shared_path, absolute, shown, settings, pure=False)
                keys[future.key] = (index, shown)
                running.add(future)
                return True
            return False

        for _ in range(window):
            if not submit_next():
                break
        for future in running:
            index, shown = keys.pop(future.key)
            try:
                results[index] = future.result()
            except Exception as exc:  # a worker died or the task could not run
                results[index] = _lost(shown, exc)
            future.release()
            submit_next()
    return [results[index] for index in range(len(paths))]
