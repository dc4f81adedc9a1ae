"""Why a workbook was not audited: the file, a limit, or a fault in regaudit, told apart
(auditor.pipeline.batch.audit_guarded) and shown in words by the summary and audit.json."""

from __future__ import annotations

import hashlib
from pathlib import Path

import pytest

import auditor.pipeline.audit as audit_module
from auditor.model import AuditResult
from auditor.pipeline.batch import audit_guarded
from auditor.policy import load_policy
from auditor.report.text import render_text

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures"


def _a_workbook() -> Path:
    return sorted((FIXTURES / "workbooks").glob("*.xlsx"))[0]


def test_a_fault_in_regaudit_is_not_called_a_broken_file(
    monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    def planted(*_: object) -> None:
        raise ZeroDivisionError("planted for the test")

    monkeypatch.setattr(audit_module, "audit_workbook", planted)
    path = _a_workbook()
    result = audit_guarded(str(path), load_policy("general"), None)
    assert result.status == "unreadable"
    assert result.failure == "regaudit"
    assert "ZeroDivisionError: planted for the test" in (result.error or "")
    assert "the file itself may be fine" in (result.error or "")
    assert result.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert "Traceback" in capsys.readouterr().err  # kept for the bug report
    assert result.to_dict()["failure"] == "regaudit"
    run = AuditResult("test", "general", [result])
    assert "not audited: a fault in regaudit, not necessarily in the file:" in render_text(run)


def test_a_broken_file_is_said_to_be_unreadable(tmp_path: Path) -> None:
    broken = tmp_path / "torn.xlsx"
    broken.write_bytes(_a_workbook().read_bytes()[:300])  # a zip cut short
    result = audit_guarded(str(broken), load_policy("general"), None)
    assert (result.status, result.failure) == ("unreadable", "file")
    assert result.error
    assert "could not be read:" in render_text(AuditResult("test", "general", [result]))


def test_an_audited_workbook_has_no_failure() -> None:
    result = audit_guarded(str(_a_workbook()), load_policy("general"), None)
    assert result.status in ("audited", "no-regressions")
    assert result.failure is None
