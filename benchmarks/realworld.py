"""Real-world forms (issue 16): regaudit on the study set of real public workbooks, scored.

    python benchmarks/realworld.py [--set PATH]   # default: ../shared/realworld beside the repo

Runs ``regaudit audit`` on ``PATH/workbooks``, then the set's own scorer (``PATH/score.py`` with
``PATH/key.json``), and prints its table (found, invented, recompute agreement, real mistakes
flagged, false alarms, crashes) and the time. The workbooks belong to their authors and are never
copied into this repository; without the set this benchmark says so and stops. A benchmark, not
a test.
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEFAULT = ROOT.parent / "shared" / "realworld"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--set", default=str(DEFAULT), help="folder with workbooks/, key.json, score.py"
    )
    args = parser.parse_args()
    study = Path(args.set)
    needed = [study / "workbooks", study / "key.json", study / "score.py"]
    if not all(p.exists() for p in needed):
        print(f"the real-world study set is not here ({study}); nothing to measure")
        return 0
    with tempfile.TemporaryDirectory() as out:
        started = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "auditor", "audit", str(study / "workbooks"), "--out", out,
             "--no-ledger", "--format", "json"],
            check=False, stdout=subprocess.DEVNULL,
        )  # fmt: skip
        elapsed = time.perf_counter() - started
        scored = subprocess.run(
            [sys.executable, str(study / "score.py"), str(study / "key.json"),
             str(Path(out) / "audit.json")],
            check=False, capture_output=True, text=True,
        )  # fmt: skip
    print(scored.stdout.rstrip())
    print(f"audited in {elapsed:.1f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
