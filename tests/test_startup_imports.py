"""What the command line imports before it audits: not scipy.stats nor scipy.optimize (half a
second together), not the report writers' libraries until a report is written. Checked in a
fresh interpreter; start-up time itself is measured in benchmarks/, never asserted here."""

from __future__ import annotations

import json
import subprocess
import sys

PROBE = """
import json, sys
import auditor.cli.main, auditor.pipeline.audit, auditor.checks
names = ("scipy.stats", "scipy.optimize", "xlsxwriter", "tabulate", "sqlite3")
print(json.dumps({name: name in sys.modules for name in names}))
"""


def test_the_audit_path_imports_no_heavy_module_it_does_not_use() -> None:
    done = subprocess.run([sys.executable, "-c", PROBE], capture_output=True, text=True, check=True)
    loaded = json.loads(done.stdout.strip().splitlines()[-1])
    assert loaded == {
        "scipy.stats": False,
        "scipy.optimize": False,
        "xlsxwriter": False,
        "tabulate": False,
        "sqlite3": False,
    }


THREADS_PROBE = """
import json, os
import auditor.cli.main
names = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS")
print(json.dumps({name: os.environ.get(name) for name in names}))
"""


def _threads_setting(environment: dict[str, str]) -> dict[str, str]:
    done = subprocess.run(
        [sys.executable, "-c", THREADS_PROBE], capture_output=True, text=True, check=True,
        env=environment,
    )  # fmt: skip
    setting: dict[str, str] = json.loads(done.stdout.strip().splitlines()[-1])
    return setting


def test_the_command_line_asks_blas_for_one_thread_unless_told_otherwise() -> None:
    import os

    plain = {
        k: v for k, v in os.environ.items() if k not in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS")
    }
    assert _threads_setting(plain) == {"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    chosen = {**plain, "OPENBLAS_NUM_THREADS": "4"}
    assert _threads_setting(chosen) == {"OPENBLAS_NUM_THREADS": "4", "OMP_NUM_THREADS": "1"}
