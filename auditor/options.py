"""One run's settings, gathered in one record instead of a long parameter list."""

from __future__ import annotations

from dataclasses import dataclass

DEFAULT_FORMATS: tuple[str, ...] = ("json", "text", "xlsx")  # the reports written by default


@dataclass(frozen=True)
class RunOptions:
    """How one ``regaudit audit`` run audits and what it writes (the CLI fills it)."""

    policy: str = "general"  # a policy name from rules/ or a TOML file
    jobs: int = 1  # worker processes
    formats: tuple[str, ...] = DEFAULT_FORMATS
    bindings_file: str | None = None  # TOML mapping a template's cells once for a batch
    timestamp: str | None = None  # fixed date for reproducible reports
    cluster: str | None = None  # a Dask scheduler address
    ship_bytes: bool = False  # send file contents to the cluster, not paths
    waivers_file: str | None = None
    baseline_file: str | None = None
    write: bool = True  # False: audit and return, write no report
    annotate: bool = False  # annotated copies of the flagged workbooks
    changed: bool = False  # audit only files whose content changed since the ledger's record
    ledger_file: str | None = None
    use_ledger: bool = True
    time_limit: float | None = 600.0  # seconds per file
    memory_limit_gb: float | None = 4.0  # per worker
    detail: str = "findings"  # detail sheets in audit.xlsx: "findings" (with a finding) or "all"
