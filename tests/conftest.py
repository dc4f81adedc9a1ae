"""Shared test set-up: every test's audits record into a temporary ledger, never the user's."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

# The tests mirror auditor/ in folders; helpers shared between them (package_builders,
# strd_reference, the report samples) are imported by module name from any folder.
_HERE = Path(__file__).resolve().parent
for _folder in (_HERE, *sorted(p for p in _HERE.iterdir() if p.is_dir() and p.name.isidentifier())):
    if str(_folder) not in sys.path:
        sys.path.append(str(_folder))
_FIXTURE_SCRIPTS = str(_HERE.parent / "fixtures")  # make_fixtures.recalculate, the generators
if _FIXTURE_SCRIPTS not in sys.path:
    sys.path.append(_FIXTURE_SCRIPTS)


@pytest.fixture(autouse=True)
def _private_ledger(
    tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch
) -> Path:
    path = tmp_path_factory.mktemp("ledger") / "ledger.sqlite"
    monkeypatch.setenv("REGAUDIT_LEDGER", str(path))
    return path
