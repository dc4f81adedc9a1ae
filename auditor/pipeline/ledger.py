"""The audit ledger: an SQLite file that remembers every audit of every file.

Per audited file it keeps the content's SHA-256 and size, when and how long, the policy (name
and a digest of its thresholds and bindings, so an edited policy file is a different policy), the
tool version, and the :class:`auditor.model.WorkbookResult` as JSON: whole, or (when that run's
reports showed no more) without the data points of the regressions that have no finding, which
are nearly all of a record's size. With ``changed`` a run re-audits only the files whose content
has no stored result under the same policy and version holding the points its reports show, and
reuses the stored results for the rest, so the reports still cover every file.

Each file's record is committed on its own as soon as that file is done (WAL journal), so a run
killed half-way keeps everything finished before the kill, and the next run with ``changed``
carries on from there. Only the parent process writes; workers never touch the ledger.

    runs(id, started, finished, policy, settings, version, files, reused)
    audits(id, run, path, sha256, size, audited_at, seconds, policy, settings, version,
           status, reusable, result)
"""

from __future__ import annotations

import dataclasses
import json
import os
import sqlite3
from collections.abc import Callable, Generator, Iterable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from auditor.errors import LedgerError
from auditor.model import WorkbookResult
from auditor.pipeline import resultjson
from auditor.read.open import sha256_of

SCHEMA_VERSION = 1
_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS runs (
    id INTEGER PRIMARY KEY, started TEXT NOT NULL, finished TEXT, policy TEXT NOT NULL,
    settings TEXT NOT NULL, version TEXT NOT NULL, files INTEGER NOT NULL,
    reused INTEGER NOT NULL DEFAULT 0);
CREATE TABLE IF NOT EXISTS audits (
    id INTEGER PRIMARY KEY, run INTEGER NOT NULL REFERENCES runs(id), path TEXT NOT NULL,
    sha256 TEXT NOT NULL, size INTEGER NOT NULL, audited_at TEXT NOT NULL, seconds REAL NOT NULL,
    policy TEXT NOT NULL, settings TEXT NOT NULL, version TEXT NOT NULL, status TEXT NOT NULL,
    reusable INTEGER NOT NULL, result TEXT NOT NULL);
CREATE INDEX IF NOT EXISTS audits_by_content ON audits (sha256, settings, version);
CREATE INDEX IF NOT EXISTS audits_by_path ON audits (path);
"""


@dataclass(frozen=True)
class AuditKey:
    """What must match for a stored result to stand for a new audit of the same content."""

    policy: str  # the policy's name, as reports show it
    settings: str  # digest of the policy's thresholds and the bindings (see settings_digest)
    version: str  # regaudit's version


@dataclass(frozen=True)
class HistoryEntry:
    audited_at: str
    sha256: str
    size: int
    seconds: float
    policy: str
    version: str
    status: str
    regressions: int
    findings: dict[str, int]


def default_ledger_path() -> Path:
    """$REGAUDIT_LEDGER, else $XDG_STATE_HOME/regaudit/ledger.sqlite (~/.local/state/...)."""
    explicit = os.environ.get("REGAUDIT_LEDGER")
    if explicit:
        return Path(explicit)
    state = os.environ.get("XDG_STATE_HOME") or str(Path.home() / ".local" / "state")
    return Path(state) / "regaudit" / "ledger.sqlite"


def settings_digest(policy: Any, bindings: Any = None) -> str:
    """A digest of everything besides the file that decides a result: thresholds, bindings."""
    import hashlib

    is_record = dataclasses.is_dataclass(policy) and not isinstance(policy, type)
    plain = dataclasses.asdict(policy) if is_record else policy
    text = json.dumps([plain, bindings], sort_keys=True, default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _now() -> str:
    return datetime.now(tz=UTC).isoformat(timespec="milliseconds")


class Ledger:
    """One ledger file. Use as a context manager; each ``record`` is its own transaction."""

    def __init__(self, path: str | Path) -> None:
        self.path = Path(path)
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self.db = sqlite3.connect(self.path, timeout=30.0, isolation_level=None)
            self.db.execute("PRAGMA journal_mode=WAL")
            self.db.execute("PRAGMA synchronous=NORMAL")  # durable against a killed process
            self.db.executescript(_SCHEMA)  # idempotent: every statement is IF NOT EXISTS
            with self._transaction():
                self._check_version()
        except sqlite3.DatabaseError as exc:
            raise LedgerError(
                f"ledger {str(self.path)!r} cannot be used ({exc}); give another file with "
                "--ledger, or move this one aside"
            ) from exc

    def _check_version(self) -> None:
        row = self.db.execute("SELECT value FROM meta WHERE key = 'schema'").fetchone()
        if row is None:
            self.db.execute("INSERT INTO meta VALUES ('schema', ?)", (str(SCHEMA_VERSION),))
        elif row[0] != str(SCHEMA_VERSION):
            raise LedgerError(
                f"ledger {str(self.path)!r} has schema {row[0]!r}; this regaudit writes "
                f"{SCHEMA_VERSION}: give another file with --ledger"
            )

    def _transaction(self) -> Any:
        db = self.db

        class _Tx:
            def __enter__(self) -> None:
                db.execute("BEGIN IMMEDIATE")

            def __exit__(self, kind: Any, *_: Any) -> None:
                db.execute("COMMIT" if kind is None else "ROLLBACK")

        return _Tx()

    def __enter__(self) -> Ledger:
        return self

    def __exit__(self, *_: Any) -> None:
        self.close()

    def close(self) -> None:
        self.db.close()

    def begin_run(self, key: AuditKey, files: int) -> int:
        with self._transaction():
            cursor = self.db.execute(
                "INSERT INTO runs (started, policy, settings, version, files) VALUES (?,?,?,?,?)",
                (_now(), key.policy, key.settings, key.version, files),
            )
        return int(cursor.lastrowid or 0)

    def finish_run(self, run: int, reused: int) -> None:
        with self._transaction():
            self.db.execute(
                "UPDATE runs SET finished = ?, reused = ? WHERE id = ?", (_now(), reused, run)
            )

    def record(
        self,
        run: int,
        path: Path,
        identity: tuple[str, int],
        key: AuditKey,
        result: WorkbookResult,
        seconds: float,
        reusable: bool = True,
        payload: str | None = None,
    ) -> None:
        """Store one file's result (``payload``: its JSON, when a worker made it already);
        committed before this returns."""
        if payload is None:
            payload = resultjson.dumps(result)
        with self._transaction():
            self.db.execute(
                "INSERT INTO audits (run, path, sha256, size, audited_at, seconds, policy,"
                " settings, version, status, reusable, result) VALUES (?,?,?,?,?,?,?,?,?,?,?,?)",
                (
                    run,
                    _path_key(path),
                    identity[0],
                    identity[1],
                    _now(),
                    seconds,
                    key.policy,
                    key.settings,
                    key.version,
                    result.status,
                    int(reusable),
                    payload,
                ),
            )

    def lookup(self, sha256: str, key: AuditKey, points: str = "all") -> WorkbookResult | None:
        """The latest reusable result for this content under ``key``, or None; with ``points``
        "all" only a result stored with every data point will do (see ``resultjson.dumps``)."""
        row = self.db.execute(
            "SELECT result FROM audits WHERE sha256 = ? AND settings = ? AND version = ?"
            " AND policy = ? AND reusable = 1 ORDER BY id DESC LIMIT 1",
            (sha256, key.settings, key.version, key.policy),
        ).fetchone()
        if row is None:
            return None
        try:
            result, whole = resultjson.loads_record(row[0])
        except (TypeError, ValueError, KeyError):
            return None  # written by a model this version cannot rebuild: audit again
        return result if whole or points == "findings" else None

    def history(self, path: str | Path) -> list[HistoryEntry]:
        """Every recorded audit of ``path``, oldest first."""
        rows = self.db.execute(
            "SELECT audited_at, sha256, size, seconds, policy, version, status, result"
            " FROM audits WHERE path = ? ORDER BY id",
            (_path_key(Path(path)),),
        ).fetchall()
        return [_history_entry(row) for row in rows]


def _history_entry(row: tuple[Any, ...]) -> HistoryEntry:
    result = json.loads(row[7])
    findings: dict[str, int] = {}
    everything = list(result.get("findings", []))
    for regression in result.get("regressions", []):
        everything.extend(regression.get("findings", []))
    for finding in everything:
        severity = str(finding.get("severity"))
        findings[severity] = findings.get(severity, 0) + 1
    return HistoryEntry(
        row[0], row[1], row[2], row[3], row[4], row[5], row[6],
        len(result.get("regressions", [])), findings,
    )  # fmt: skip


def _path_key(path: Path) -> str:
    return str(path.resolve())


def file_identity(path: Path) -> tuple[str, int] | None:
    """(SHA-256, size) of the file's content, or None when it cannot be read."""
    try:
        return sha256_of(path), path.stat().st_size
    except OSError:
        return None


# (index, result, seconds, reusable), optionally followed by the result's JSON for the ledger
AuditMany = Callable[[list[Path]], Iterable[tuple[Any, ...]]]


def audit_with_ledger(
    paths: list[Path],
    audit_many: AuditMany,
    ledger: Ledger,
    key: AuditKey,
    changed: bool,
    points: str = "all",
) -> Generator[tuple[int, WorkbookResult]]:
    """Yield ``(index, result)`` for every path: stored results first when ``changed`` and the
    content is known, then fresh audits from ``audit_many`` as they finish, each recorded.

    ``audit_many(subset)`` yields ``(index into subset, result, seconds, reusable)``, and may add
    the result's JSON as a fifth item (made by the worker, so the parent only stores it); a result
    stopped by a time or memory limit should come with ``reusable`` False, so a later run tries
    it again. ``points``: the data points the caller's reports show ("all", or "findings": of
    the regressions with a finding only), which a stored result must hold to be reused."""
    identities = [file_identity(path) for path in paths]
    todo: list[int] = []
    reused = 0
    run = ledger.begin_run(key, len(paths))
    for index, (path, identity) in enumerate(zip(paths, identities, strict=True)):
        stored = ledger.lookup(identity[0], key, points) if changed and identity else None
        if stored is None:
            todo.append(index)
            continue
        reused += 1
        yield index, dataclasses.replace(stored, path=str(path))
    for sub_index, result, seconds, reusable, *made in audit_many([paths[i] for i in todo]):
        index = todo[sub_index]
        identity = identities[index]
        if identity is not None:
            payload = made[0] if made else None
            ledger.record(run, paths[index], identity, key, result, seconds, reusable, payload)
        yield index, result
    ledger.finish_run(run, reused)
