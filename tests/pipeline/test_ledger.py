"""The ledger: a large batch with broken files, a run killed half-way and resumed, reuse rules.

Outside truth for the batch: numpy's least squares (``numpy.polyfit``) for every good file's
slope; the stored values the files carry were computed the same way, as a spreadsheet would have
saved them.
"""

from __future__ import annotations

import json
import os
import signal
import sqlite3
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pytest
from package_builders import package_parts, sheet_xml, write_package

from auditor.model import WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.pipeline.ledger import (
    AuditKey,
    Ledger,
    LedgerError,
    audit_with_ledger,
    settings_digest,
)
from auditor.pipeline.limits import Failure, FileLimits, run_limited
from auditor.pipeline.resultjson import dumps
from auditor.policy import load_policy

POLICY = load_policy("general")
KEY = AuditKey(POLICY.name, settings_digest(POLICY), "test-version")


def small_workbook(path: Path, seed: int) -> tuple[Path, float]:
    """Eight points and a SLOPE/INTERCEPT pair with their stored values; returns the slope."""
    rng = np.random.default_rng(seed)
    x = np.arange(1.0, 9.0)
    y = np.round(0.5 + 1.7 * x + rng.normal(0, 0.3, 8), 3)
    slope, intercept = np.polyfit(x, y, 1)
    rows = ['<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c></row>']
    for i in range(8):
        r = i + 2
        stats = ""
        if r == 2:
            stats = (
                f'<c r="D2" t="s"><v>2</v></c><c r="E2"><f>SLOPE(B2:B9,A2:A9)</f>'
                f"<v>{float(slope)!r}</v></c>"
            )
        elif r == 3:
            stats = (
                f'<c r="D3" t="s"><v>3</v></c><c r="E3"><f>INTERCEPT(B2:B9,A2:A9)</f>'
                f"<v>{float(intercept)!r}</v></c>"
            )
        cells = f'<c r="A{r}"><v>{float(x[i])!r}</v></c><c r="B{r}"><v>{float(y[i])!r}</v></c>'
        rows.append(f'<row r="{r}">{cells}{stats}</row>')
    parts = package_parts({"Data": sheet_xml("".join(rows))}, ["x", "y", "Slope", "Intercept"])
    return write_package(path, parts), float(slope)


def broken_file(path: Path, index: int, template: bytes) -> Path:
    kind = index % 5
    if kind == 0:
        path.write_bytes(template[: len(template) // 2])
    elif kind == 1:
        path.write_text("x,y\n1,2\n", encoding="utf-8")
    elif kind == 2:
        path.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(1024))
    elif kind == 3:
        path.write_bytes(b"")
    else:
        path.write_bytes(b"PK\x03\x04" + template[4:300])  # a zip header, then nothing whole
    return path


def audit_path(path: Path) -> WorkbookResult:
    return audit_workbook(path, POLICY)


def stopped(path: Path, failure: Failure) -> WorkbookResult:
    return WorkbookResult(str(path), "", "unreadable", error=failure.reason)


def pooled(jobs: int) -> object:
    """audit_many for audit_with_ledger: the limited pool, results as they finish."""

    def audit_many(paths: list[Path]) -> Iterator[tuple[int, WorkbookResult, float, bool]]:
        started = time.monotonic()
        for index, result in run_limited(audit_path, paths, jobs, FileLimits(60.0), stopped):
            yield index, result, time.monotonic() - started, True

    return audit_many


@pytest.mark.skipif(not hasattr(os, "fork"), reason="the pool forks its workers")
def test_thousand_files_with_five_percent_broken(tmp_path: Path) -> None:
    folder = tmp_path / "batch"
    folder.mkdir()
    template = small_workbook(tmp_path / "template.xlsx", 0)[0].read_bytes()
    paths: list[Path] = []
    slopes: dict[str, float] = {}
    for index in range(1000):
        path = folder / f"run_{index:04d}.xlsx"
        if index % 20 == 7:  # 50 broken files, 5 %
            broken_file(path, index // 20, template)
        else:
            slopes[path.name] = small_workbook(path, index + 1)[1]
        paths.append(path)
    with Ledger(tmp_path / "ledger.sqlite") as ledger:
        run = audit_with_ledger(paths, pooled(2), ledger, KEY, changed=False)  # type: ignore[arg-type]
        results = dict(run)
        recorded = ledger.db.execute("SELECT COUNT(*) FROM audits").fetchone()[0]
    assert sorted(results) == list(range(1000)) and recorded == 1000
    good = [r for r in results.values() if Path(r.path).name in slopes]
    broken = [r for r in results.values() if Path(r.path).name not in slopes]
    assert len(good) == 950 and len(broken) == 50
    assert all(r.status == "audited" for r in good)
    for result in good:
        assert result.regressions[0].intended["slope"] == pytest.approx(
            slopes[Path(result.path).name], rel=1e-9
        )
    assert all(r.status == "unreadable" and r.error for r in broken)


_KILLED_RUN = """
import sys, time
from pathlib import Path
sys.path[:0] = [{here!r}, {tests!r}]
import test_ledger as t
from auditor.pipeline.ledger import Ledger, audit_with_ledger

def slow(paths):
    for index, path in enumerate(paths):
        time.sleep(0.05)  # slow enough for the parent to kill the run half-way
        yield index, t.audit_path(path), 0.05, True

paths = sorted(Path({folder!r}).glob("*.xlsx"))
with Ledger({ledger!r}) as ledger:
    for _ in audit_with_ledger(paths, slow, ledger, t.KEY, changed=True):
        pass
"""


def _serial(paths: list[Path]) -> Iterator[tuple[int, WorkbookResult, float, bool]]:
    for index, path in enumerate(paths):
        yield index, audit_path(path), 0.0, True


def test_a_killed_run_resumes_and_loses_nothing(tmp_path: Path) -> None:
    folder = tmp_path / "files"
    folder.mkdir()
    for index in range(60):
        small_workbook(folder / f"site_{index:02d}.xlsx", 500 + index)
    ledger_path = tmp_path / "ledger.sqlite"
    script = _KILLED_RUN.format(
        here=str(Path(__file__).parent),
        tests=str(Path(__file__).parents[1]),
        folder=str(folder),
        ledger=str(ledger_path),
    )
    child = subprocess.Popen([sys.executable, "-c", script], cwd=Path(__file__).parents[2])
    recorded = 0
    deadline = time.monotonic() + 120  # a guard against hanging, not a measurement
    while recorded < 15 and child.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
        if ledger_path.exists():
            try:
                with sqlite3.connect(ledger_path, timeout=5) as db:
                    recorded = db.execute("SELECT COUNT(*) FROM audits").fetchone()[0]
            except sqlite3.OperationalError:
                recorded = 0  # tables not created yet
    child.send_signal(signal.SIGKILL)
    child.wait()
    assert child.returncode == -signal.SIGKILL, "the run finished before it could be killed"
    with sqlite3.connect(ledger_path) as db:
        assert db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        kept = db.execute("SELECT COUNT(*) FROM audits").fetchone()[0]
        unfinished = db.execute("SELECT COUNT(*) FROM runs WHERE finished IS NULL").fetchone()[0]
    assert 15 <= kept < 60 and unfinished == 1

    paths = sorted(folder.glob("*.xlsx"))
    fresh: list[Path] = []

    def counting(subset: list[Path]) -> Iterator[tuple[int, WorkbookResult, float, bool]]:
        fresh.extend(subset)
        yield from _serial(subset)

    with Ledger(ledger_path) as ledger:
        resumed = dict(audit_with_ledger(paths, counting, ledger, KEY, changed=True))
    assert len(fresh) == 60 - kept  # only what the killed run had not finished
    reference = {index: result for index, result, _, _ in _serial(paths)}
    assert sorted(resumed) == list(range(60))
    for index in range(60):
        assert _plain(resumed[index]) == _plain(reference[index]), paths[index].name

    fresh.clear()
    with Ledger(ledger_path) as ledger:
        again = dict(audit_with_ledger(paths, counting, ledger, KEY, changed=True))
    assert fresh == [] and len(again) == 60


def _plain(result: WorkbookResult | object) -> str:
    return json.dumps(result.to_dict(), sort_keys=True, default=str)  # type: ignore[attr-defined]


def test_reuse_needs_the_same_content_policy_and_version(tmp_path: Path) -> None:
    path, _ = small_workbook(tmp_path / "a.xlsx", 1)
    moved = tmp_path / "elsewhere" / "copy.xlsx"
    moved.parent.mkdir()
    moved.write_bytes(path.read_bytes())
    with Ledger(tmp_path / "l.sqlite") as ledger:
        first = dict(audit_with_ledger([path], _serial, ledger, KEY, changed=True))[0]
        calls: list[list[Path]] = []

        def spy(subset: list[Path]) -> Iterator[tuple[int, WorkbookResult, float, bool]]:
            calls.append(subset)
            yield from _serial(subset)

        reused = dict(audit_with_ledger([moved], spy, ledger, KEY, changed=True))[0]
        assert calls == [[]] and reused.path == str(moved) and reused.sha256 == first.sha256
        for other in (
            AuditKey("calibration", KEY.settings, KEY.version),
            AuditKey(KEY.policy, "another-digest", KEY.version),
            AuditKey(KEY.policy, KEY.settings, "0.0.1"),
        ):
            calls.clear()
            dict(audit_with_ledger([path], spy, ledger, other, changed=True))
            assert calls == [[path]], other
        calls.clear()
        dict(audit_with_ledger([path], spy, ledger, KEY, changed=False))
        assert calls == [[path]]  # without "changed" every file is audited again
        small_workbook(path, 2)  # new content at the same path
        calls.clear()
        dict(audit_with_ledger([path], spy, ledger, KEY, changed=True))
        assert calls == [[path]]


def test_a_record_without_every_point_serves_only_runs_that_show_no_more(tmp_path: Path) -> None:
    """A run whose reports show the points of regressions with a finding only records the rest
    without theirs; a later run that shows every point (``--detail all``, review.html) audits
    again rather than reuse it, and the whole record it leaves serves both kinds after."""
    path, _ = small_workbook(tmp_path / "a.xlsx", 5)
    calls: list[list[Path]] = []

    def recorded(subset: list[Path], points: str) -> Iterator[tuple[object, ...]]:
        calls.append(subset)
        for index, p in enumerate(subset):
            result = audit_path(p)
            yield index, result, 0.0, True, dumps(result, points)

    fresh = audit_path(path)
    (regression,) = fresh.regressions
    assert not regression.findings and len(regression.data) == 8
    assert len(dumps(fresh, "findings")) < len(dumps(fresh))
    with Ledger(tmp_path / "l.sqlite") as ledger:

        def run(points: str, records: str) -> WorkbookResult:
            many = lambda subset: recorded(subset, records)  # noqa: E731
            return dict(audit_with_ledger([path], many, ledger, KEY, True, points))[0]

        run("findings", "findings")
        assert run("findings", "findings").regressions[0].data == [] and calls == [[path], []]
        again = run("all", "all")  # the stored record lacks points: audited again
        assert calls == [[path], [], [path]] and again.regressions[0].data == regression.data
        reused = run("findings", "findings")  # the latest record, whole, serves this run too
        assert calls[-1] == [] and reused.regressions[0].data == regression.data


def test_results_stopped_by_a_limit_are_tried_again(tmp_path: Path) -> None:
    path, _ = small_workbook(tmp_path / "a.xlsx", 3)

    def limited(subset: list[Path]) -> Iterator[tuple[int, WorkbookResult, float, bool]]:
        for index, p in enumerate(subset):
            yield index, WorkbookResult(str(p), "", "unreadable", error="stopped"), 60.0, False

    with Ledger(tmp_path / "l.sqlite") as ledger:
        dict(audit_with_ledger([path], limited, ledger, KEY, changed=True))
        again = dict(audit_with_ledger([path], _serial, ledger, KEY, changed=True))[0]
        assert again.status == "audited"
        history = ledger.history(path)
    assert [h.status for h in history] == ["unreadable", "audited"]
    assert history[1].regressions == 1 and history[1].size == path.stat().st_size


def test_history_lists_every_audit_of_a_file(tmp_path: Path) -> None:
    path, _ = small_workbook(tmp_path / "a.xlsx", 4)
    with Ledger(tmp_path / "l.sqlite") as ledger:
        for seed in (4, 5):
            small_workbook(path, seed)
            dict(audit_with_ledger([path], _serial, ledger, KEY, changed=True))
        entries = ledger.history(path)
        assert ledger.history(tmp_path / "never.xlsx") == []
    assert len(entries) == 2 and entries[0].sha256 != entries[1].sha256
    assert all(e.policy == "general" and e.version == "test-version" for e in entries)
    assert entries[0].audited_at <= entries[1].audited_at


def test_a_file_that_is_not_a_ledger_is_refused(tmp_path: Path) -> None:
    bogus = tmp_path / "notes.sqlite"
    bogus.write_text("not a database, just notes\n" * 100)
    with pytest.raises(LedgerError, match="cannot be used"):
        Ledger(bogus)
