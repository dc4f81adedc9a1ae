"""Benchmarks for reading and auditing: medians, ratios and peak memory, printed as a table.

    python benchmarks/run.py                    # the three sizes, the 1,048,576-row sheet,
                                                # and 1 vs 2 workers on 200 files
    python benchmarks/run.py --sizes rows_30 --repeat 9 --skip-huge --skip-throughput
    python benchmarks/run.py --profile rows_200000   # where the whole audit spends its time
    python benchmarks/run.py --targets --repeat 3    # only issue 14's targets (targets.py)

Per size it times, in one process and interleaved so that machine load touches all alike:

* raw pass: zipfile + ``lxml.etree.iterparse`` over every worksheet part, the formula text and
  stored value text of every ``<c>`` (``findtext``), and every shared string: the least any
  reader of formulas and values must do;
* reader: ``read_workbook`` (the one-pass reader, building the Workbook);
* audit: the whole audit of the file (read, locate, extract, fit, checks) and its JSON;
* openpyxl x2: ``read_workbook(engine="openpyxl")``, two full openpyxl loads.

The 1,048,576-row sheet and the throughput runs go to fresh processes, so that their peak
resident size (VmHWM) is theirs alone. A size whose audit exceeds ``--timeout`` is reported as
such. The corpus is written once into ``--corpus`` (deterministic: see corpus.py; by default
in the system's temporary folder). Never part of
the test suite: these runs take minutes.
"""

from __future__ import annotations

import argparse
import cProfile
import json
import os
import platform
import pstats
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import corpus  # noqa: E402
import targets  # noqa: E402
from rawpass import raw_pass  # noqa: E402

SIZES = {shape.name: shape for shape in (corpus.SMALL, corpus.MEDIUM, corpus.LARGE)}


def read_only(path: Path) -> object:
    from auditor.read.open import read_workbook

    return read_workbook(path)


def read_openpyxl(path: Path) -> object:
    from auditor.read.open import read_workbook

    return read_workbook(path, engine="openpyxl")


def whole_audit(path: Path) -> int:
    """One file audited as the batch does it, and its JSON (the result's share of audit.json)."""
    from auditor.pipeline.audit import audit_workbook
    from auditor.policy import load_policy

    result = audit_workbook(path, load_policy("general"))
    if result.status == "unreadable":
        raise SystemExit(f"benchmark file {path} is unreadable: {result.error}")
    return len(json.dumps(result.to_dict(), default=str))


def _seconds(work: Callable[[Path], object], path: Path) -> float:
    started = time.perf_counter()
    work(path)
    return time.perf_counter() - started


def time_size(path: Path, repeat: int, skip_openpyxl: bool) -> dict[str, float]:
    jobs: dict[str, Callable[[Path], object]] = {
        "raw pass": raw_pass,
        "reader": read_only,
        "audit": whole_audit,
    }
    if not skip_openpyxl:
        jobs["openpyxl x2"] = read_openpyxl
    raw_pass(path)  # the page cache; imports were warmed by main() on the smallest workbook
    samples: dict[str, list[float]] = {name: [] for name in jobs}
    for _ in range(repeat):
        for name, work in jobs.items():
            samples[name].append(_seconds(work, path))
    return {name: statistics.median(values) for name, values in samples.items()}


_CHILD = """
import json, os, re, sys, time
sys.path.insert(0, {bench!r})
import run
if os.environ.get("REGAUDIT_BENCH_PROPOSED"):
    import proposed
    proposed.install()
started = time.perf_counter()
getattr(run, {what!r})(*{args!r})
seconds = time.perf_counter() - started
status = open("/proc/self/status").read()
peak = int(re.search(r"VmHWM:\\s+(\\d+) kB", status).group(1)) / 1024
print(json.dumps({{"seconds": seconds, "peak_mb": peak}}))
"""


def in_child(what: str, args: list[object], timeout: float) -> dict[str, float] | None:
    """Run ``run.<what>(*args)`` in a fresh interpreter: its time and peak resident size."""
    code = _CHILD.format(bench=str(Path(__file__).parent), what=what, args=args)
    try:
        done = subprocess.run(
            [sys.executable, "-c", code],
            capture_output=True,
            text=True,
            timeout=timeout,
            check=True,
        )
    except subprocess.TimeoutExpired:
        return None
    result: dict[str, float] = json.loads(done.stdout.strip().splitlines()[-1])
    return result


def audit_batch_timed(folder: str, jobs: int) -> float:
    """All workbooks in ``folder`` through the limited pool with ``jobs`` workers, JSON too."""
    from auditor.pipeline.limits import FileLimits, run_limited

    paths = sorted(Path(folder).glob("*.xlsx"))
    started = time.perf_counter()
    done = list(run_limited(whole_audit, paths, jobs, FileLimits(), _refuse))
    if len(done) != len(paths):
        raise SystemExit("the throughput run lost files")
    return time.perf_counter() - started


def _refuse(path: Path, failure: object) -> int:
    raise SystemExit(f"benchmark file {path} was stopped: {failure}")


def machine() -> str:
    model = "unknown CPU"
    cpuinfo = Path("/proc/cpuinfo")
    if cpuinfo.exists():
        for line in cpuinfo.read_text().splitlines():
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    memory = ""
    meminfo = Path("/proc/meminfo")
    if meminfo.exists():
        total_kb = int(meminfo.read_text().split()[1])
        memory = f", {total_kb / 1024**2:.0f} GB RAM"
    import lxml
    import openpyxl

    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return (
        f"{model}, {cores} cores{memory}; {platform.system()} {platform.release()}; Python "
        f"{platform.python_version()}, lxml {lxml.__version__}, openpyxl {openpyxl.__version__}"
    )


def _fmt(seconds: float | None) -> str:
    if seconds is None:
        return "—"
    return f"{seconds * 1000:.1f} ms" if seconds < 1 else f"{seconds:.2f} s"


def print_sizes(results: dict[str, dict[str, float]]) -> None:
    print("| workbook | cells | raw pass | reader | audit + JSON | openpyxl ×2 | "
          "reader / raw | audit / raw | openpyxl / raw |")  # fmt: skip
    print("|---|---:|---:|---:|---:|---:|---:|---:|---:|")
    for name, row in results.items():
        raw = row["raw pass"]
        openpyxl = row.get("openpyxl x2")
        ratio = f"{openpyxl / raw:.1f}×" if openpyxl else "—"
        print(
            f"| {name} | {int(row['cells']):,} | {_fmt(raw)} | {_fmt(row['reader'])} | "
            f"{_fmt(row['audit'])} | {_fmt(openpyxl)} | {row['reader'] / raw:.2f}× | "
            f"{row['audit'] / raw:.2f}× | {ratio} |"
        )


def profile(path: Path, top: int) -> None:
    whole_audit(path)
    profiler = cProfile.Profile()
    profiler.runcall(whole_audit, path)
    stats = pstats.Stats(profiler)
    stats.sort_stats("tottime").print_stats(top)
    stats.sort_stats("cumulative").print_stats(top)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--corpus", default=str(Path(tempfile.gettempdir()) / "regaudit-bench"))
    parser.add_argument("--sizes", default=",".join(SIZES), help="comma-separated size names")
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--timeout", type=float, default=900.0, help="seconds per child run")
    parser.add_argument("--skip-openpyxl", action="store_true")
    parser.add_argument("--skip-huge", action="store_true")
    parser.add_argument("--skip-throughput", action="store_true")
    parser.add_argument("--repeat-throughput", type=int, default=3)
    parser.add_argument("--profile", metavar="SIZE", help="profile the whole audit of SIZE")
    parser.add_argument(
        "--targets", action="store_true", help="only the targets of issue 14 (targets.py)"
    )
    parser.add_argument("--skip-targets", action="store_true")
    parser.add_argument(
        "--proposed", action="store_true", help="with the patches of proposed.py installed"
    )
    args = parser.parse_args(argv)
    folder = Path(args.corpus)
    print(f"machine: {machine()}\n")
    if args.proposed:
        import proposed

        proposed.check(Path(__file__).resolve().parents[1] / "fixtures")
        proposed.install()
        os.environ["REGAUDIT_BENCH_PROPOSED"] = "1"  # children install them too
        print("(with the patches of benchmarks/proposed.py)\n")
    if args.profile:
        profile(corpus.ensure(SIZES[args.profile], folder), 35)
        return 0
    if args.targets:
        targets.print_targets(folder, args.repeat, args.timeout, args.skip_huge)
        return 0
    results: dict[str, dict[str, float]] = {}
    small = corpus.ensure(corpus.SMALL, folder)
    for work in (raw_pass, read_only, whole_audit, read_openpyxl):  # imports and caches
        work(small)
    for name in [n for n in args.sizes.split(",") if n]:
        path = corpus.ensure(SIZES[name], folder)
        repeat = (
            args.repeat
            if SIZES[name].rows * SIZES[name].sheets < 100_000
            else max(1, args.repeat // 2)
        )
        results[name] = {"cells": raw_pass(path), **time_size(path, repeat, args.skip_openpyxl)}
        print(f"  measured {name} ({repeat} runs each)", file=sys.stderr)
    if results:
        print_sizes(results)
    if not args.skip_huge:
        huge = corpus.ensure(corpus.HUGE, folder)
        print(
            f"\n1,048,576-row sheet ({huge.stat().st_size / 1e6:.0f} MB on disk), "
            "a fresh process each:"
        )
        print("| run | time | peak RSS |\n|---|---:|---:|")
        for label, what in (
            ("raw pass", "raw_pass"),
            ("reader", "read_only"),
            ("audit + JSON", "whole_audit"),
        ):
            got = in_child(what, [str(huge)], args.timeout)
            if got is None:
                print(f"| {label} | over {args.timeout:.0f} s (stopped) | — |")
            else:
                print(f"| {label} | {_fmt(got['seconds'])} | {got['peak_mb']:.0f} MB |")
    if not args.skip_throughput:
        batch = folder / "batch_200"
        corpus.ensure_many(200, batch)
        samples: dict[int, list[float]] = {1: [], 2: []}
        loads = [os.getloadavg()[0]]
        for _ in range(args.repeat_throughput):  # interleaved, so that others' load hits both
            for jobs in (1, 2):
                got = in_child("audit_batch_timed", [str(batch), jobs], args.timeout)
                if got is not None:
                    samples[jobs].append(got["seconds"])
                loads.append(os.getloadavg()[0])
        print(
            f"\nthroughput, 200 files (30-400 rows, 1-3 sheets each), audit + JSON, median of "
            f"{args.repeat_throughput}; 1-minute load average {min(loads):.1f}-{max(loads):.1f} "
            "(other work on the machine lowers the 2-worker figure):"
        )
        print("| workers | wall time | files/s |\n|---:|---:|---:|")
        medians = {j: statistics.median(v) if v else None for j, v in samples.items()}
        for jobs, seconds in medians.items():
            rate = f"{200 / seconds:.1f}" if seconds else "—"
            print(f"| {jobs} | {_fmt(seconds)} | {rate} |")
        if medians[1] and medians[2]:
            print(f"\n1 → 2 workers: {medians[1] / medians[2]:.2f}× the throughput")
    if not args.skip_targets:
        targets.print_targets(folder, args.repeat, args.timeout, args.skip_huge)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
