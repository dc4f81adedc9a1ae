"""The process entry (``python -m auditor``, the ``regaudit`` script): main's exit code and
everything it printed and wrote survive the end of the process (auditor.__main__.command)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def _run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "auditor", *args], capture_output=True, text=True, check=False
    )


def test_a_usage_error_exits_2_with_its_message() -> None:
    done = _run("audit", "no-such-workbook.xlsx", "--no-ledger")
    assert done.returncode == 2
    assert "no such file or folder: 'no-such-workbook.xlsx'" in done.stderr


def test_an_audit_ends_with_its_code_its_lines_and_its_reports(tmp_path: Path) -> None:
    out = tmp_path / "out"
    book = FIXTURES / "lab_clean_reference.xlsx"
    done = _run("audit", str(book), "--out", str(out), "--ledger", str(tmp_path / "l.sqlite"))
    assert done.returncode == 0, done.stderr
    lines = done.stdout.splitlines()
    assert lines[0].startswith("1 workbook: 1 audited")
    assert [line.split()[-1] for line in lines[1:4]] == [
        str(out / "audit.json"),
        str(out / "summary.txt"),
        str(out / "audit.xlsx"),
    ]
    assert json.loads((out / "audit.json").read_text(encoding="utf-8"))["workbooks"][0]["path"]
    assert (out / "summary.txt").read_text(encoding="utf-8").strip()
    assert (tmp_path / "l.sqlite").stat().st_size > 0


def test_exit_handlers_run_and_their_output_survives() -> None:
    # The process ends without the interpreter's teardown, but after the atexit handlers (a
    # library's, a coverage tool's) and with the standard streams flushed.
    code = (
        "import atexit, sys\n"
        "atexit.register(lambda: print('handler ran'))\n"
        "sys.argv = ['regaudit', 'audit', 'no-such-workbook.xlsx', '--no-ledger']\n"
        "from auditor.__main__ import command\n"
        "print('before the end', end='')\n"
        "command()\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=False)
    assert done.returncode == 2
    assert done.stdout == "before the endhandler ran\n"
    assert "no such file or folder" in done.stderr
