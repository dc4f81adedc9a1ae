"""Shared test set-up: every test's audits record into a temporary ledger, never the user's."""

from __future__ import annotations

from pathlib import Path

import pytest


@pytest.fixture(autouse=True)
def _private_ledger(
    tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch
) -> Path:
    path = tmp_path_factory.mktemp("ledger") / "ledger.sqlite"
    monkeypatch.setenv("REGAUDIT_LEDGER", str(path))
    return path
