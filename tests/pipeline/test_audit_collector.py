"""audit_workbook holds the cyclic collector back while it audits (auditor.pipeline.collector)
and leaves it as it found it: on after a workbook with regressions, after one whose analysis
fails inside, and off when the caller had it off."""

from __future__ import annotations

import gc
from pathlib import Path

import pytest

from auditor.pipeline import audit
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def test_the_collector_is_held_back_inside_and_on_after(monkeypatch: pytest.MonkeyPatch) -> None:
    seen: list[bool] = []
    locate = audit.locate

    def watched(*args: object) -> object:
        seen.append(gc.isenabled())
        return locate(*args)  # type: ignore[arg-type]

    monkeypatch.setattr(audit, "locate", watched)
    result = audit_workbook(BOOKS / "lab_nitrate_calibration_beside.xlsx", load_policy("general"))
    assert result.status == "audited"
    assert seen == [False] and gc.isenabled()


def test_on_after_a_failure_inside_and_off_when_it_was_off(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    def broken(*_args: object) -> object:
        raise RuntimeError("a recogniser fails")

    monkeypatch.setattr(audit, "locate", broken)
    with pytest.raises(RuntimeError):
        audit_workbook(BOOKS / "lab_nitrate_calibration_beside.xlsx", load_policy("general"))
    assert gc.isenabled()
    monkeypatch.undo()
    gc.disable()
    try:
        audit_workbook(BOOKS / "lab_nitrate_calibration_beside.xlsx", load_policy("general"))
        assert not gc.isenabled()
    finally:
        gc.enable()
