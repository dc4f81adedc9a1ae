"""A plain `pip install .` (the README's first command) ships every package of auditor/: the
explicit package list in pyproject.toml must name each folder that holds modules."""

from __future__ import annotations

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_every_package_folder_is_listed_in_pyproject() -> None:
    listed = set(
        tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"][
            "packages"
        ]
    )
    folders = {
        ".".join(init.parent.relative_to(ROOT).parts)
        for init in (ROOT / "auditor").rglob("__init__.py")
    }
    assert folders - listed == set()
