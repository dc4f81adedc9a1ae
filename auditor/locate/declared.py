"""Regressions declared by defined names (``<stem>_x``…) or by a bindings file."""

from __future__ import annotations

import fnmatch
import re
from pathlib import Path

from auditor.errors import FormulaError
from auditor.formula.syntax import Ref, parse
from auditor.locate.formulas import FormulaLocator
from auditor.locate.spec import RegressionSpec, StatCell, ref_arg
from auditor.model import STAT_KEYS, FoundBy
from auditor.read.workbook import Cell


def _ref_from_text(locator: FormulaLocator, text: str, sheet: str | None) -> Ref | None:
    try:
        node = parse(
            "=" + text.lstrip("="), sheet or next(iter(locator.workbook.sheets)), locator.workbook
        )
    except (FormulaError, StopIteration):
        return None
    return ref_arg(node)


def _from_declarations(
    locator: FormulaLocator,
    declared: dict[str, dict[str, str]],
    how: FoundBy,
    intercepts: dict[str, bool],
) -> list[RegressionSpec]:
    """``declared[stem] = {"x": ref text, "y": ref text, "slope": cell text, …}``."""
    specs = []
    for stem, entries in declared.items():
        if "x" not in entries or "y" not in entries:
            continue
        x = _ref_from_text(locator, entries["x"], None)
        y = _ref_from_text(locator, entries["y"], None)
        if x is None or y is None:
            continue
        spec = RegressionSpec(stem, y.sheet, x, y, intercepts.get(stem, True), how)
        for key, text in entries.items():
            if key in ("x", "y"):
                continue
            ref = _ref_from_text(locator, text, y.sheet)
            if ref is None:
                continue
            cell = locator.workbook.cell(ref.sheet, ref.r1, ref.c1) or Cell(
                ref.sheet, ref.r1, ref.c1, None
            )
            locator._put(spec, key, StatCell(key, cell, "name" if how == "names" else "binding"))
        if spec.stats:
            first = min(spec.stats.values(), key=lambda s: (s.cell.row, s.cell.col)).cell
            spec.sheet = first.sheet
        specs.append(spec)
    return specs


def from_names(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """Defined names ``<stem>_x``, ``<stem>_y`` and ``<stem>_slope``… declare a regression."""
    declared: dict[str, dict[str, str]] = {}
    pattern = re.compile(r"^(?P<stem>.+?)_(?P<key>x|y|" + "|".join(STAT_KEYS) + r")$", re.I)
    for defined in locator.workbook.names:
        match = pattern.match(defined.name)
        if match:
            stem = match.group("stem")
            declared.setdefault(stem, {})[match.group("key").lower()] = defined.refers_to
    return _from_declarations(locator, declared, "names", {})


def from_bindings(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """A bindings file maps the cells of a template once for a batch of copies."""
    name = Path(locator.workbook.path).name
    declared: dict[str, dict[str, str]] = {}
    intercepts: dict[str, bool] = {}
    for index, entry in enumerate(locator.bindings, start=1):
        if not fnmatch.fnmatch(name, str(entry.get("files", "*"))):
            continue
        stem = str(entry.get("id", f"binding-{index}"))
        declared[stem] = {"x": str(entry["x"]), "y": str(entry["y"])}
        declared[stem].update({k: str(v) for k, v in dict(entry.get("stats", {})).items()})
        intercepts[stem] = bool(entry.get("intercept", True))
    return _from_declarations(locator, declared, "bindings", intercepts)
