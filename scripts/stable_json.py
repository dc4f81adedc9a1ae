"""Audit a folder and print its audit.json with the volatile fields stripped (time, paths, version).

Used to show that a change of structure leaves results identical:

    python scripts/stable_json.py fixtures/workbooks > before.json   (on the old commit)
    python scripts/stable_json.py fixtures/workbooks > after.json    (on the new one)
    diff before.json after.json
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
from pathlib import Path
from typing import Any

VOLATILE = {"generated", "version", "duration_s", "elapsed", "seconds", "timestamp"}


def strip(value: Any) -> Any:
    if isinstance(value, dict):
        return {k: strip(v) for k, v in value.items() if k not in VOLATILE}
    if isinstance(value, list):
        return [strip(v) for v in value]
    if isinstance(value, str) and "/" in value and value.endswith((".xlsx", ".xlsm")):
        return Path(value).name
    return value


def main(folder: str) -> None:
    with tempfile.TemporaryDirectory() as out:
        subprocess.run(
            ["regaudit", "audit", folder, "--out", out, "--no-ledger", "--jobs", "1"],
            check=False,
            stdout=subprocess.DEVNULL,
        )
        document = json.loads((Path(out) / "audit.json").read_text(encoding="utf-8"))
    json.dump(strip(document), sys.stdout, indent=1, sort_keys=True)


if __name__ == "__main__":
    main(sys.argv[1])
