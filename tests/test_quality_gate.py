"""The quality gate runs inside the test command, so CI and a developer run the same checks:
ruff (lint and format) over the whole tree and mypy --strict over the package."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _run(*command: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(command, cwd=ROOT, capture_output=True, text=True, check=False)


def _tool(name: str) -> str:
    found = shutil.which(name, path=str(Path(sys.executable).parent)) or shutil.which(name)
    if found is None:
        pytest.fail(f"{name} is not installed; install the test extras: pip install -e '.[test]'")
    return found


def test_ruff_lint_is_clean() -> None:
    done = _run(_tool("ruff"), "check", ".")
    assert done.returncode == 0, done.stdout + done.stderr


def test_ruff_format_is_clean() -> None:
    done = _run(_tool("ruff"), "format", "--check", ".")
    assert done.returncode == 0, done.stdout + done.stderr


def test_mypy_strict_on_the_package() -> None:
    done = _run(sys.executable, "-m", "mypy", "--strict", "auditor")
    assert done.returncode == 0, done.stdout + done.stderr
