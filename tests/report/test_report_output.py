"""The atomic writer and write_reports: no half-written file, never onto an input."""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import BinaryIO

import pytest
from test_report_sample import sample_result

from auditor.errors import UsageError
from auditor.model import AuditResult
from auditor.report import REPORTERS, write_reports
from auditor.report.output import atomic_output


class FailsMidway:
    """A reporter that has written part of its file when it breaks."""

    filename = "audit.json"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(b'{"format": 1, "tool": ')
        raise RuntimeError("reporter broke")


def test_write_reports_writes_every_format(tmp_path: Path) -> None:
    out = tmp_path / "reports" / "nested"
    written = write_reports(sample_result(), out, ["json", "text", "xlsx", "json"])
    assert written == [out / "audit.json", out / "summary.txt", out / "audit.xlsx"]
    assert sorted(os.listdir(out)) == ["audit.json", "audit.xlsx", "summary.txt"]
    assert json.loads((out / "audit.json").read_text(encoding="utf-8"))["policy"] == "calibration"
    assert (out / "audit.xlsx").read_bytes()[:2] == b"PK"  # a zip container


def test_old_report_survives_a_failing_reporter(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    previous = tmp_path / "audit.json"
    previous.write_bytes(b'{"old": true}\n')
    monkeypatch.setitem(REPORTERS, "json", FailsMidway())
    with pytest.raises(RuntimeError, match="reporter broke"):
        write_reports(sample_result(), tmp_path, ["json"])
    assert previous.read_bytes() == b'{"old": true}\n'
    assert os.listdir(tmp_path) == ["audit.json"]  # no temporary file left behind


def test_no_file_appears_when_the_first_write_fails(tmp_path: Path) -> None:
    target = tmp_path / "summary.txt"
    with pytest.raises(KeyboardInterrupt):
        with atomic_output(target) as handle:
            handle.write(b"half")
            raise KeyboardInterrupt
    assert os.listdir(tmp_path) == []


def test_content_replaces_target_on_success(tmp_path: Path) -> None:
    target = tmp_path / "summary.txt"
    target.write_bytes(b"old")
    with atomic_output(target) as handle:
        handle.write(b"new content")
    assert target.read_bytes() == b"new content"
    assert os.listdir(tmp_path) == ["summary.txt"]


@pytest.mark.skipif(os.name != "posix", reason="file modes are POSIX")
def test_new_report_gets_an_ordinary_file_mode(tmp_path: Path) -> None:
    # A temporary file is private (0600); a report must be readable like any new file.
    umask = os.umask(0o022)
    try:
        with atomic_output(tmp_path / "audit.json") as handle:
            handle.write(b"{}")
    finally:
        os.umask(umask)
    assert (tmp_path / "audit.json").stat().st_mode & 0o777 == 0o644


def test_refuses_to_overwrite_an_audited_workbook(tmp_path: Path) -> None:
    source = tmp_path / "audit.xlsx"  # someone audits a folder holding a workbook of that name
    source.write_bytes(b"the author's workbook")
    result = sample_result()
    result.workbooks[0].path = str(source)
    with pytest.raises(UsageError, match="refusing to write the report"):
        write_reports(result, tmp_path, ["text", "xlsx"])
    assert source.read_bytes() == b"the author's workbook"
    assert os.listdir(tmp_path) == ["audit.xlsx"]  # summary.txt was not written either


def test_refuses_a_relative_spelling_of_an_input(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.chdir(tmp_path)
    Path("summary.txt").write_bytes(b"source")
    with pytest.raises(UsageError):
        with atomic_output(tmp_path / "summary.txt", ["./summary.txt"]):
            pass
    assert Path("summary.txt").read_bytes() == b"source"


@pytest.mark.skipif(not hasattr(os, "link"), reason="needs hard links")
def test_refuses_a_hard_link_to_an_input(tmp_path: Path) -> None:
    source = tmp_path / "book.xlsx"
    source.write_bytes(b"source")
    os.link(source, tmp_path / "audit.json")
    with pytest.raises(UsageError):
        write_reports(sample_result(), tmp_path, ["json"], input_paths=[source])
    assert source.read_bytes() == b"source"


def test_unknown_format_is_a_usage_error(tmp_path: Path) -> None:
    with pytest.raises(
        UsageError, match="unknown report format 'pdf'; choose from html, json, sarif, text, xlsx"
    ):
        write_reports(sample_result(), tmp_path / "out", ["json", "pdf"])
    assert not (tmp_path / "out").exists()


class TextFails:
    filename = "summary.txt"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        raise RuntimeError("summary broke")


def test_a_failing_reporter_leaves_none_of_the_set(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # audit.json is written before summary.txt fails: it is not renamed into place either.
    monkeypatch.setitem(REPORTERS, "text", TextFails())
    with pytest.raises(RuntimeError, match="summary broke"):
        write_reports(sample_result(), tmp_path, ["json", "text", "xlsx"])
    assert os.listdir(tmp_path) == []
