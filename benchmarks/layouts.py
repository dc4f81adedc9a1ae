"""Generated layouts (issue 12): regaudit on fixtures/layouts against the generator's answer key.

    python benchmarks/layouts.py     # the table of fixtures/layout_score.py, and the time

The workbooks and key come from ``fixtures/layout_generator.py`` (LibreOffice-recalculated,
committed). A benchmark, not a test: the suite runs a sample (tests/test_layouts.py).
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "fixtures"))
from layout_score import breakdown, score, table  # noqa: E402


def main() -> None:
    folder = ROOT / "fixtures" / "layouts"
    key = json.loads((folder / "key.json").read_text(encoding="utf-8"))
    with tempfile.TemporaryDirectory() as out:
        started = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "auditor", "audit", str(folder / "workbooks"), "--out", out,
             "--no-ledger", "--format", "json"],
            check=False, stdout=subprocess.DEVNULL,
        )  # fmt: skip
        elapsed = time.perf_counter() - started
        audit = json.loads((Path(out) / "audit.json").read_text(encoding="utf-8"))
    result = score(key, audit)
    books = len(key["workbooks"])
    print(f"generated layouts: {books} workbooks, audited in {elapsed:.1f} s")
    print(table(result))
    print("by arrangement, form and planted kind:")
    print(breakdown(result))
    for name, items in result["misses"].items():
        for item in items[:5]:
            print(f"  {name}: {item}")


if __name__ == "__main__":
    main()
