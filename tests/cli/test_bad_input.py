"""Bad input gets one clear line and the right exit code, and loses nothing (issue 17's table)."""

from __future__ import annotations

import json
import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from package_builders import compound_file

from auditor.cli.main import main
from auditor.pipeline import batch

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
BOOKS = ("lab_p_value_slips.xlsx", "ops_se_slips.xlsx")


def _folder(tmp_path: Path, names: tuple[str, ...] = BOOKS) -> Path:
    folder = tmp_path / "books"
    folder.mkdir()
    for name in names:
        shutil.copyfile(FIXTURES / name, folder / name)
    return folder


def _one_error_line(err: str) -> str:
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, lines
    assert "Traceback" not in err
    return lines[0]


def test_out_naming_an_existing_file(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    folder = _folder(tmp_path)
    target = tmp_path / "notes.txt"
    target.write_text("keep me", encoding="utf-8")
    assert main(["audit", str(folder), "--out", str(target), "--no-ledger"]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert line.startswith("error: --out") and "is an existing file, not a folder" in line
    assert target.read_text(encoding="utf-8") == "keep me"


def test_out_folder_that_cannot_be_written(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    folder = _folder(tmp_path)
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    if os.geteuid() == 0:
        # root writes through a read-only mode; stand in the refusal a user would get.
        import auditor.report.output as output

        def refuse(*_: object, **__: object) -> None:
            raise PermissionError(13, "Permission denied", str(locked))

        monkeypatch.setattr(output.tempfile, "TemporaryFile", refuse)
    try:
        code = main(["audit", str(folder), "--out", str(locked), "--no-ledger"])
    finally:
        locked.chmod(0o755)
    assert code == 2
    line = _one_error_line(capsys.readouterr().err)
    assert "cannot write into the output folder" in line and "Permission denied" in line
    assert list(locked.iterdir()) == []


def test_out_inside_the_audited_folder_is_never_audited(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    folder = _folder(tmp_path)
    out = folder / "review"
    for _ in range(2):
        main(["audit", str(folder), "--out", str(out), "--annotate", "--no-ledger"])
        capsys.readouterr()
    document = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    assert sorted(Path(w["path"]).name for w in document["workbooks"]) == sorted(BOOKS)
    assert sorted(p.name for p in out.iterdir()) == sorted(
        ["audit.json", "audit.xlsx", "summary.txt"]
        + [name.replace(".xlsx", ".audited.xlsx") for name in BOOKS]
    )
    # A second --out beside the first: the first report folder is passed over too.
    main(["audit", str(folder), "--out", str(folder / "again"), "--no-ledger"])
    again = json.loads((folder / "again" / "audit.json").read_text(encoding="utf-8"))
    assert len(again["workbooks"]) == len(BOOKS)


def test_other_formats_are_listed_with_their_reason(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    folder = _folder(tmp_path, BOOKS[:1])
    (folder / "readings.csv").write_text("x,y\n1,2\n", encoding="utf-8")
    compound_file(folder / "archive.xls", {"Workbook": b"\x09\x08\x10\x00"})
    (folder / "draft.ods").write_bytes(b"PK\x03\x04")
    (folder / "notes.txt").write_text("not a spreadsheet", encoding="utf-8")
    out = tmp_path / "out"
    main(["audit", str(folder), "--out", str(out), "--no-ledger", "--format", "json,text"])
    captured = capsys.readouterr()
    for name, reason in (
        ("archive.xls", "legacy Excel 97-2003 workbook"),
        ("draft.ods", "OpenDocument spreadsheet"),
        ("readings.csv", "plain text values without formulas"),
    ):
        assert f"skipped {folder / name}: {name} is " in captured.err
        assert reason in captured.err
        assert str(folder / name) in (out / "summary.txt").read_text(encoding="utf-8")
    assert "notes.txt" not in captured.err  # not a spreadsheet: nobody expects it audited
    document = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    assert sorted(Path(s["path"]).name for s in document["skipped"]) == [
        "archive.xls",
        "draft.ods",
        "readings.csv",
    ]
    assert "3 file(s) of other formats not audited" in captured.out


def test_counts_say_what_happened(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    broken = tmp_path / "truncated.xlsx"
    broken.write_bytes((FIXTURES / BOOKS[0]).read_bytes()[:3000])
    assert main(["audit", str(broken), "--out", str(tmp_path / "out"), "--no-ledger"]) == 2
    captured = capsys.readouterr()
    assert captured.out.splitlines()[0] == "1 workbook: 1 unreadable"
    assert "audited" not in captured.out.splitlines()[0]
    assert "damaged or truncated" in captured.err


def test_password_protected_file_says_so_and_how_to_get_a_copy(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # MS-CFB: an encrypted xlsx is a compound file holding EncryptionInfo and EncryptedPackage.
    protected = compound_file(
        tmp_path / "locked.xlsx", {"EncryptionInfo": b"\4\0\4\0", "EncryptedPackage": b"\0" * 9}
    )
    assert main(["audit", str(protected), "--out", str(tmp_path / "out"), "--no-ledger"]) == 2
    err = capsys.readouterr().err
    assert "locked.xlsx is password-protected" in err
    assert "Ask the author for a copy without the password" in err
    assert "OLE" not in err and "encrypted package" not in err


def test_interrupt_in_a_batch_writes_nothing_and_keeps_the_ledger(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    folder = _folder(tmp_path)
    real = batch.iter_audits

    def interrupted(*args: object, **kwargs: object):  # type: ignore[no-untyped-def]
        stream = real(*args, **kwargs)  # type: ignore[arg-type]
        yield next(stream)  # the first file finishes, then Ctrl-C
        raise KeyboardInterrupt

    monkeypatch.setattr(batch, "iter_audits", interrupted)
    ledger = tmp_path / "ledger.sqlite"
    out = tmp_path / "out"
    args = ["audit", str(folder), "--out", str(out), "--ledger", str(ledger), "--jobs", "0"]
    assert main(args) == 130
    line = _one_error_line(capsys.readouterr().err)
    assert line.startswith("interrupted: no report was written")
    assert not out.exists() or list(out.iterdir()) == []
    with sqlite3.connect(ledger) as db:
        rows = db.execute("SELECT path, status FROM audits").fetchall()
        runs = db.execute("SELECT finished FROM runs").fetchall()
    assert [Path(path).name for path, _ in rows] == [BOOKS[0]]  # the finished file, whole
    assert runs == [(None,)]  # the run is marked as never finished
    monkeypatch.setattr(batch, "iter_audits", real)
    assert main([*args, "--changed"]) in (0, 1)  # the next run carries on and completes
    assert (out / "audit.json").exists()


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals and process groups")
def _run_finished(ledger: Path) -> bool:
    with sqlite3.connect(ledger) as db:
        row = db.execute("SELECT finished FROM runs ORDER BY id DESC LIMIT 1").fetchone()
    return row is not None and row[0] is not None


def test_ctrl_c_reaches_parent_and_workers_and_gives_one_line(tmp_path: Path) -> None:
    folder = _folder(tmp_path)
    for copy in range(48):  # enough work that the interrupt lands inside the batch
        shutil.copyfile(FIXTURES / BOOKS[copy % 2], folder / f"copy{copy}.xlsx")
    ledger = tmp_path / "ledger.sqlite"
    out = tmp_path / "out"
    command = [sys.executable, "-m", "auditor", "audit", str(folder), "--out", str(out)]
    command += ["--ledger", str(ledger), "--jobs", "2"]
    process = subprocess.Popen(
        command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, start_new_session=True
    )
    # Wait (by condition, not by a fixed delay) until the run is recorded: the batch is running.
    for _ in range(600):
        if process.poll() is not None:
            break
        if ledger.exists():
            try:
                with sqlite3.connect(ledger, timeout=1) as db:
                    if db.execute("SELECT COUNT(*) FROM runs").fetchone()[0]:
                        break
            except sqlite3.Error:
                pass
        time.sleep(0.05)
    if process.poll() is not None:
        pytest.skip("the batch finished before the interrupt could be sent")
    os.killpg(process.pid, signal.SIGINT)  # as a terminal's Ctrl-C: the whole process group
    try:
        _, err = process.communicate(timeout=120)
    except subprocess.TimeoutExpired:
        os.killpg(process.pid, signal.SIGKILL)
        _, err = process.communicate()
        pytest.fail(f"regaudit did not stop after Ctrl-C: {err.decode('utf-8')}")
    text = err.decode("utf-8")
    if process.returncode != 130 and _run_finished(ledger):
        pytest.skip("the batch finished before the interrupt reached it")
    assert process.returncode == 130, text
    assert "Traceback" not in text and "KeyboardInterrupt" not in text
    assert [line for line in text.splitlines() if line.strip()] == [
        line for line in text.splitlines() if line.startswith("interrupted:")
    ]
    assert not out.exists() or list(out.iterdir()) == []
    with sqlite3.connect(ledger) as db:
        assert db.execute("PRAGMA integrity_check").fetchone() == ("ok",)
