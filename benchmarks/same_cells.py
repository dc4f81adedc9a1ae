"""Proof over whole folders that the fast sheet scanner reads what the lxml reader reads.

    python benchmarks/same_cells.py FOLDER [FOLDER ...]

Every .xlsx/.xlsm below each folder is read in place (never copied, never written) twice:
``read_workbook(path, engine="stream")`` (the fast scanner, lxml for the parts it does not
recognise) and ``engine="lxml"`` (the lxml reader for every part). The two readings must hold
exactly the same cells (value, its type, formula, number format, array block), extents, names
and array blocks (:func:`auditor.read.equality.workbook_differences`), or fail with the same
message; the index the scanner keeps of each sheet must hold what a walk over its cells finds
(:func:`auditor.read.equality.index_differences`). Prints the counts, the parts that went to
lxml and why, and the time of each reader; exits 1 on any difference.
"""

from __future__ import annotations

import sys
import time
from collections import Counter
from pathlib import Path

from auditor.errors import UnreadableWorkbook
from auditor.read import scan
from auditor.read.equality import index_differences, workbook_differences
from auditor.read.open import read_workbook
from auditor.read.workbook import sheet_index


def _read(path: Path, engine: str) -> tuple[object, float]:
    started = time.perf_counter()
    try:
        found: object = read_workbook(path, engine=engine)
    except UnreadableWorkbook as exc:
        found = f"unreadable: {exc}"
    return found, time.perf_counter() - started


def compare_folder(folder: Path) -> tuple[Counter[str], list[str], dict[str, float]]:
    counts: Counter[str] = Counter()
    problems: list[str] = []
    seconds = {"stream": 0.0, "lxml": 0.0}
    paths = sorted(p for p in folder.rglob("*") if p.suffix.lower() in (".xlsx", ".xlsm"))
    for path in paths:
        before = Counter(scan.FALLBACKS)
        fast, fast_seconds = _read(path, "stream")
        fell_back = scan.FALLBACKS - before
        slow, slow_seconds = _read(path, "lxml")
        seconds["stream"] += fast_seconds
        seconds["lxml"] += slow_seconds
        counts["files"] += 1
        for reason, number in fell_back.items():
            counts[f"parts read by lxml: {reason}"] += number
        if isinstance(fast, str) or isinstance(slow, str):
            counts["unreadable"] += 1
            if fast != slow:
                problems.append(f"{path}: {fast!s:.200} vs {slow!s:.200}")
            continue
        differences = workbook_differences(slow, fast)  # type: ignore[arg-type]
        differences += index_differences(fast)  # type: ignore[arg-type]
        sheets = fast.sheets.values()  # type: ignore[attr-defined]
        counts["sheets with the reader's index"] += sum(1 for s in sheets if sheet_index(s))
        counts["sheets"] += len(sheets)
        counts["cells"] += sum(len(s.cells) for s in sheets)
        counts["formula cells"] += sum(1 for s in sheets for c in s.cells.values() if c.formula)
        if differences:
            problems.append(f"{path}: " + "; ".join(differences[:5]))
    counts["files that differ"] = len(problems)
    return counts, problems, seconds


def main(argv: list[str]) -> int:
    if not argv:
        print(__doc__)
        return 2
    failed = False
    for name in argv:
        counts, problems, seconds = compare_folder(Path(name))
        print(f"\n{name}:")
        print("| count | value |\n|---|---:|")
        for key, value in counts.items():
            print(f"| {key} | {value:,} |")
        print(f"| seconds, fast scanner | {seconds['stream']:.2f} |")
        print(f"| seconds, lxml reader | {seconds['lxml']:.2f} |")
        for problem in problems:
            print(f"DIFFERENT {problem}")
        failed = failed or bool(problems)
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
