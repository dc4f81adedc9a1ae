"""Every planted design problem is flagged and nothing else is: the design fixtures
(fixtures/manifest_design.json) and the two design cases of fixtures/manifest.json.

Source of truth: the manifests, written by the fixture scripts, which confirm each planted
property by a direct computation before writing (brute-force refits, group means); the stored
values are LibreOffice's. Kinds are compared as sets per regression; the expected cells must be
among the flagged ones.
"""

from __future__ import annotations

import functools
import json
from pathlib import Path
from typing import Any

import pytest

from auditor.checks import REGISTRY
from auditor.model import Finding
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

ROOT = Path(__file__).resolve().parents[2]
FIXTURES = ROOT / "fixtures"
DESIGN_CHECKS = {c.id for c in REGISTRY.values() if c.family == "design"}


def _declared() -> list[tuple[str, dict[str, Any]]]:
    out = []
    for name in ("manifest_design.json", "manifest.json"):
        manifest = json.loads((FIXTURES / name).read_text(encoding="utf-8"))
        for entry in manifest["workbooks"]:
            for regression in entry["regressions"]:
                if name == "manifest_design.json" or "design_expected" in regression:
                    out.append((entry["file"], regression))
    return out


@functools.cache
def design_findings(file: str) -> dict[tuple[str, str], list[Finding]]:
    """Design findings per (x range, y range), through the whole pipeline."""
    path, policy = FIXTURES / "workbooks" / file, load_policy("general")
    result = audit_workbook(path, policy)
    return {
        (r.x_range, r.y_range): [f for f in r.findings if f.check in DESIGN_CHECKS]
        for r in result.regressions
    }


CASES = _declared()


@pytest.mark.parametrize(("file", "declared"), CASES, ids=[f"{f}:{r['y_range']}" for f, r in CASES])
def test_design_kinds_as_declared(file: str, declared: dict[str, Any]) -> None:
    found = design_findings(file)[(declared["x_range"], declared["y_range"])]
    expected = {e["kind"] for e in declared["design_expected"]}
    assert {f.kind for f in found} == expected, [f.message for f in found]
    flagged = {cell for f in found for cell in f.cells}
    for item in declared["design_expected"]:
        assert set(item["cells"]) <= flagged, (item, sorted(flagged))


def test_each_kind_is_planted_twice_in_different_layouts() -> None:
    # The issue asks for every design kind at least twice, in different layouts (sheets).
    seen: dict[str, set[tuple[str, str]]] = {}
    for file, declared in CASES:
        for item in declared["design_expected"]:
            seen.setdefault(item["kind"], set()).add((file, declared["sheet"]))
    kinds = {"narrow-spread", "few-levels", "single-point-leverage", "fragile-significance",
             "extrapolation", "lack-of-fit"}  # fmt: skip
    assert set(seen) == kinds
    assert all(len(places) >= 2 for places in seen.values()), seen
    clean = [d for _, d in CASES if not d["design_expected"]]
    assert len(clean) >= 3, "well-designed regressions that must not be flagged"
