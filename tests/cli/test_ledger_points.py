"""The ledger keeps the data points the run's reports show; a later ``--changed`` run whose
reports show more (``--detail all``) audits the file again instead of reusing a record without
them, so its detail sheets never come out empty."""

from __future__ import annotations

import shutil
import sqlite3
from pathlib import Path

import pytest
from openpyxl import load_workbook

from auditor.cli.main import main

STAMP = ["--timestamp", "2000-01-01T00:00:00+00:00"]
BOOK = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks" / "lab_clean_reference.xlsx"


def _reused(ledger: Path) -> list[int]:
    with sqlite3.connect(ledger) as db:
        return [row[0] for row in db.execute("SELECT reused FROM runs ORDER BY id")]


def test_a_run_showing_every_point_does_not_reuse_a_record_without_them(tmp_path: Path) -> None:
    folder = tmp_path / "in"
    folder.mkdir()
    shutil.copy(BOOK, folder / "a.xlsx")
    shutil.copy(BOOK, folder / "b.xlsx")  # two files: the workers' path, records made there
    ledger = tmp_path / "l.sqlite"
    common = [str(folder), "--ledger", str(ledger), "--fail-on", "never", "--jobs", "2", *STAMP]
    assert main(["audit", *common, "--out", str(tmp_path / "o1")]) == 0
    assert main(["audit", *common, "--out", str(tmp_path / "o2"), "--changed"]) == 0
    out = tmp_path / "o3"
    assert main(["audit", *common, "--out", str(out), "--changed", "--detail", "all"]) == 0
    assert main(["audit", *common, "--out", str(tmp_path / "o4"), "--changed"]) == 0
    assert _reused(ledger) == [0, 2, 0, 2]
    fresh = tmp_path / "o5"  # the same run without the ledger: what the sheets must show
    alone = [str(folder), "--no-ledger", "--fail-on", "never", "--detail", "all", *STAMP, "--out"]
    assert main(["audit", *alone, str(fresh)]) == 0
    shown, expected = _detail_sheets(out / "audit.xlsx"), _detail_sheets(fresh / "audit.xlsx")
    assert len(shown) == 8 and shown == expected


def _detail_sheets(path: Path) -> dict[str, list[tuple[object, ...]]]:
    """Each regression's detail sheet (named "R01 …"), its cells' values row by row."""
    book = load_workbook(path, read_only=True)
    try:
        return {
            name: list(book[name].iter_rows(values_only=True))
            for name in book.sheetnames
            if name[:1] == "R" and name[1:3].isdigit()
        }
    finally:
        book.close()


def test_a_record_with_the_page_needs_an_audit_that_kept_every_point(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    folder = tmp_path / "in"
    folder.mkdir()
    shutil.copy(BOOK, folder / "a.xlsx")
    ledger = ["--ledger", str(tmp_path / "l.sqlite"), *STAMP]
    assert (
        main(["audit", str(folder), "--out", str(tmp_path / "o1"), "--fail-on", "never", *ledger])
        == 0
    )
    record = ["record", str(folder), "--out", str(tmp_path / "r"), *ledger]
    assert main([*record, "--format", "json,html"]) == 2  # the audit kept the clean points out
    assert "give that audit the html format too" in capsys.readouterr().err
    assert main([*record, "--format", "json,xlsx"]) == 0  # what that audit's reports showed
    again = ["audit", str(folder), "--out", str(tmp_path / "o2"), "--changed", "--fail-on", "never"]
    assert main([*again, "--format", "json,text,xlsx,html", *ledger]) == 0
    assert main([*record, "--format", "json,html"]) == 0
    assert (tmp_path / "r" / "review.html").exists()
