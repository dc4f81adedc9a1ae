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
