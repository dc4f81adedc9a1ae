"""The targets of issue 14, each measured on whole processes, as a user runs the command.

Every run is a fresh ``python -m auditor audit …`` (one worker unless said otherwise) beside a
fresh bare reading pass (``rawpass.py``: zipfile + lxml iterparse) over the same files,
alternated so that the machine's other load touches both alike; the tables give medians and
their ratio. Peak memory is the largest resident size (ru_maxrss) of any process of the run.

| target | issue 14 |
|---|---|
| default run (JSON, text, workbook, ledger), 20 books × 10 sheets × 500 rows | ≤ 1.5× |
| the same, ``--format json --no-ledger`` | ≤ 1.0× |
| 200,000-row single regression, default run | ≤ 1.5× |
| 30-row single file, default run | ≤ 0.6 s |
| 1,048,575-row sheet, JSON only | peak RSS ≤ 1 GB (aim 400 MB) |
| 1 → 2 workers, default outputs, 200 small files | ≥ 1.8× the throughput |
"""

from __future__ import annotations

import json
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

import corpus

HERE = Path(__file__).resolve().parent
PACKAGE = HERE.parent / "auditor"
_WRAP = """
import json, resource, subprocess, sys, time
started = time.perf_counter()
subprocess.run(sys.argv[1:], check=True, stdout=subprocess.DEVNULL)
seconds = time.perf_counter() - started
usage = resource.getrusage(resource.RUSAGE_CHILDREN)
cpu = usage.ru_utime + usage.ru_stime
print(json.dumps({"seconds": seconds, "peak_mb": usage.ru_maxrss / 1024, "cpu": cpu}))
"""


def measure(argv: list[str], timeout: float) -> dict[str, float] | None:
    """Wall time and peak resident size of the process ``argv`` and its children."""
    try:
        done = subprocess.run(
            [sys.executable, "-c", _WRAP, *argv],
            capture_output=True,
            text=True,
            timeout=timeout,
            check=True,
        )
    except subprocess.TimeoutExpired:
        return None
    result: dict[str, float] = json.loads(done.stdout.strip().splitlines()[-1])
    return result


def raw_argv(paths: list[Path]) -> list[str]:
    return [sys.executable, str(HERE / "rawpass.py"), *map(str, paths)]


def audit_argv(paths: list[Path], out: Path, json_only: bool, jobs: int = 1) -> list[str]:
    argv = [sys.executable, "-m", "auditor", "audit", *map(str, paths), "--out", str(out)]
    argv += ["--jobs", str(jobs), "--timestamp", "2000-01-01T00:00:00+00:00", "--fail-on", "never"]
    if json_only:
        return [*argv, "--format", "json", "--no-ledger"]
    return [*argv, "--ledger", str(out / "ledger.sqlite")]


def _median(samples: list[dict[str, float] | None], key: str = "seconds") -> float | None:
    values = [s[key] for s in samples if s is not None]
    return statistics.median(values) if values else None


def _fmt(seconds: float | None) -> str:
    if seconds is None:
        return "—"
    return f"{seconds * 1000:.0f} ms" if seconds < 1 else f"{seconds:.2f} s"


def _ratio(top: float | None, bottom: float | None) -> str:
    return f"{top / bottom:.2f}×" if top and bottom else "—"


def ratio_runs(
    paths: list[Path], repeat: int, timeout: float, scratch: Path
) -> dict[str, float | None]:
    """Medians of the reading pass, the default run and the JSON-only run, alternated: wall
    time under the names, CPU time (user + system, less moved by other load) under "… cpu"."""
    samples: dict[str, list[dict[str, float] | None]] = {"raw": [], "default": [], "json": []}
    for index in range(repeat):
        out = scratch / f"run{index}"
        samples["raw"].append(measure(raw_argv(paths), timeout))
        samples["default"].append(measure(audit_argv(paths, out / "d", False), timeout))
        samples["json"].append(measure(audit_argv(paths, out / "j", True), timeout))
    medians = {name: _median(values) for name, values in samples.items()}
    medians |= {f"{name} cpu": _median(values, "cpu") for name, values in samples.items()}
    return medians


def _both(got: dict[str, float | None], name: str) -> tuple[str, str]:
    """ "wall / cpu" time and ratio to the reading pass of the run ``name``."""
    time_text = f"{_fmt(got[name])} / {_fmt(got[name + ' cpu'])} cpu"
    ratio = f"{_ratio(got[name], got['raw'])} / {_ratio(got[name + ' cpu'], got['raw cpu'])} cpu"
    return time_text, ratio


def compile_package() -> None:
    """Byte-compile the package first, as ``pip install`` does: an editable install under
    PYTHONDONTWRITEBYTECODE (set on some machines and containers) otherwise compiles every module
    from source on every start, about 0.15 s of a 30-row file's run, which no user pays."""
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(PACKAGE)], check=True)


def print_targets(folder: Path, repeat: int, timeout: float, skip_huge: bool) -> None:
    """Measure and print every target of the issue (minutes: the corpora are written first)."""
    compile_package()
    batch20 = corpus.ensure_sheets(20, folder / "sheets_20")
    large = corpus.ensure(corpus.LARGE, folder)
    small = corpus.ensure(corpus.SMALL, folder)
    many = corpus.ensure_many(200, folder / "batch_200")
    rows: list[tuple[str, str, str, str]] = []
    with tempfile.TemporaryDirectory() as scratch_name:
        scratch = Path(scratch_name)
        got = ratio_runs(batch20, repeat, timeout, scratch / "b20")
        rows.append(("20 books × 10 sheets × 500 rows, reading pass", _both(got, "raw")[0], "", ""))
        rows.append(("  default run", *_both(got, "default"), "≤ 1.5×"))
        rows.append(("  --format json --no-ledger", *_both(got, "json"), "≤ 1.0×"))
        print("  measured the batch of 20", file=sys.stderr)
        got = ratio_runs([large], max(1, repeat // 2 + 1), timeout, scratch / "large")
        rows.append(("200,000-row single regression, reading pass", _both(got, "raw")[0], "", ""))
        rows.append(("  default run", *_both(got, "default"), "≤ 1.5×"))
        rows.append(("  --format json --no-ledger", *_both(got, "json"), ""))
        print("  measured 200,000 rows", file=sys.stderr)
        got = ratio_runs([small], repeat * 2 - 1, timeout, scratch / "small")
        rows.append(("30-row single file, reading pass", _both(got, "raw")[0], "", ""))
        rows.append(("  default run (start-up and all)", _both(got, "default")[0], "", "≤ 0.6 s"))
        rows.append(("  --format json --no-ledger", _both(got, "json")[0], "", ""))
        print("  measured 30 rows", file=sys.stderr)
        if not skip_huge:
            huge = corpus.ensure(corpus.HUGE, folder)
            raw = measure(raw_argv([huge]), timeout)
            run = measure(audit_argv([huge], scratch / "huge", True), timeout)
            rows.append(
                (
                    "1,048,575-row sheet, reading pass",
                    _fmt(raw and raw["seconds"]),
                    f"{raw['peak_mb']:.0f} MB" if raw else "—",
                    "",
                )
            )
            rows.append(
                (
                    "  --format json --no-ledger: time, peak RSS",
                    _fmt(run and run["seconds"]) if run else f"over {timeout:.0f} s",
                    f"{run['peak_mb']:.0f} MB" if run else "—",
                    "≤ 1 GB (aim 400 MB)",
                )
            )
            print("  measured the 1,048,575-row sheet", file=sys.stderr)
        workers: dict[int, list[dict[str, float] | None]] = {1: [], 2: []}
        loads = [os.getloadavg()[0]]
        for index in range(max(1, repeat // 2 + 1)):
            for jobs in (1, 2):
                out = scratch / f"many{index}_{jobs}"
                workers[jobs].append(measure(audit_argv(many, out, False, jobs), timeout))
                loads.append(os.getloadavg()[0])
        one, two = _median(workers[1]), _median(workers[2])
        rows.append(("200 small files, default outputs, 1 worker", _fmt(one), "", ""))
        rows.append(
            (
                f"  2 workers (load average {min(loads):.1f}–{max(loads):.1f})",
                _fmt(two),
                _ratio(one, two) + " throughput",
                "≥ 1.8×",
            )
        )
    print("\nissue 14 targets (whole processes, medians):")
    print("| run | time | ratio or peak | target |\n|---|---:|---:|---|")
    for row in rows:
        print("| " + " | ".join(row) + " |")
