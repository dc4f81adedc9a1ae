"""A folder of one's own workbooks, timed as a user runs the command: the bare reading pass, then
``regaudit audit`` with default outputs on one worker and on two, alternated, medians.

    python benchmarks/folder_speed.py FOLDER [--repeat 3]

For the workbooks this repository cannot hold (real ones, whose licences are their authors'):
the table gives wall and CPU time, the ratio to the reading pass and the gain of a second
worker, the figures issue 14 asks about, on the kind of files a reviewer really has. A
benchmark, not a test.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
from pathlib import Path

from targets import audit_argv, compile_package, measure, raw_argv


def workbooks(folder: Path) -> list[Path]:
    return sorted(p for p in folder.rglob("*") if p.suffix.lower() in (".xlsx", ".xlsm"))


def _medians(runs: list[dict[str, float]]) -> tuple[float, float]:
    return statistics.median(r["seconds"] for r in runs), statistics.median(r["cpu"] for r in runs)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", type=Path)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--timeout", type=float, default=900.0)
    args = parser.parse_args()
    paths = workbooks(args.folder)
    if not paths:
        print(f"no .xlsx or .xlsm workbooks in {args.folder}")
        return 1
    compile_package()
    runs: dict[str, list[dict[str, float]]] = {"reading pass": [], "1 worker": [], "2 workers": []}
    with tempfile.TemporaryDirectory() as scratch:
        for index in range(args.repeat):
            out = Path(scratch) / f"run{index}"
            for name, argv in (
                ("reading pass", raw_argv(paths)),
                ("1 worker", audit_argv(paths, out / "one", json_only=False, jobs=1)),
                ("2 workers", audit_argv(paths, out / "two", json_only=False, jobs=2)),
            ):
                got = measure(argv, args.timeout)
                if got is None:
                    print(f"{name}: no result within {args.timeout:.0f} s")
                    return 1
                runs[name].append(got)
    medians = {name: _medians(got) for name, got in runs.items()}
    raw_wall, raw_cpu = medians["reading pass"]
    print(f"{len(paths)} workbooks in {args.folder}, median of {args.repeat}\n")
    print("| run | wall | CPU | wall / reading pass |\n|---|---:|---:|---:|")
    for name, (wall, cpu) in medians.items():
        print(f"| {name} | {wall:.2f} s | {cpu:.2f} s | {wall / raw_wall:.2f}× |")
    one, two = medians["1 worker"][0], medians["2 workers"][0]
    print(f"\n1 → 2 workers: {one / two:.2f}× the throughput (reading pass CPU {raw_cpu:.2f} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
