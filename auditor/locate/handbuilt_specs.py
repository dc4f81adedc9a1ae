"""Hand-built recognitions made into regressions: one per pair, copies of a block joined."""

from __future__ import annotations

from typing import Any

from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Node, Ref
from auditor.locate.formulas import FormulaLocator
from auditor.locate.grouping import CORRELATION_FUNCS
from auditor.locate.handbuilt import HandbuiltFinder, Recognised
from auditor.locate.handbuilt_orientation import turn_if_swapped
from auditor.locate.handbuilt_reach import Key
from auditor.locate.spec import PairUse, RegressionSpec, StatCell, overlaps
from auditor.read.workbook import Workbook


def _data_signature(finder: HandbuiltFinder, spec: RegressionSpec) -> tuple[Any, ...] | None:
    """The numbers of a regression: a copy of its block beside it on the same sheet has the
    same (copies on other sheets are kept apart: a second instrument may read the same)."""
    x, y = finder.values(spec.x), finder.values(spec.y)
    if x is None or y is None:
        return None
    return tuple(map(repr, x)), tuple(map(repr, y))


def attach(spec: RegressionSpec, role: str, stat: StatCell) -> bool:
    """Add a statistic cell to a regression (``role@A1`` for a second cell of one role)."""
    if any(s.cell.address == stat.cell.address for s in spec.stats.values()):
        return False
    key = f"{role}@{stat.cell.coord}" if role in spec.stats else role
    stat.key = key
    spec.stats[key] = stat
    return True


def _put(spec: RegressionSpec, found: Recognised) -> None:
    computes = {"reading": found.reading, "value": found.value} | found.evidence
    stat = StatCell(found.role, found.cell, "hand-built", computes=computes)
    if attach(spec, found.role, stat) and found.role == "slope":
        spec.uses.append(PairUse(found.cell, "hand-built", found.y, found.x))


def join(found: list[RegressionSpec], other: RegressionSpec) -> bool:
    """Give a regression found otherwise (same data) the recognised cells of a hand-built one;
    an intercept built from a slope cell never stands alone. True: ``other`` is consumed."""
    for spec in found:
        same = overlaps(spec.x, other.x) and overlaps(spec.y, other.y)
        orientable = _orientable(spec)
        if not same and orientable and overlaps(spec.x, other.y) and overlaps(spec.y, other.x):
            # A regression seen only through CORREL(a, b)^2 has no direction of its own: the
            # hand-built slope's COVARIANCE/VAR says which range is x.
            spec.x, spec.y, same = spec.y, spec.x, True
        if same and orientable:  # the regression is the hand-built one; the correlation joins
            spec.found_by = other.found_by
        if same and orientable and spec.intercept == other.intercept:
            for stat in other.stats.values():  # with the hand-built one's dependents: the R²
                attach(spec, stat.key.split("@")[0], stat)  # alone had none of its own
            return True
        if same and spec.x_columns == 1 and spec.intercept == other.intercept:
            for stat in other.stats.values():
                if stat.how == "hand-built":  # its followed dependents are the other's own
                    attach(spec, stat.key.split("@")[0], stat)
            return True
    return all(s.computes.get("reading") == "slope-cell" for s in other.stats.values())


def find(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """The recogniser: hand-built regressions, with the statistics built on them attached."""
    if locator.evaluator is None:
        locator.evaluator = Evaluator(locator.workbook)
    handbuilt, attach_only = handbuilt_specs(locator.workbook, locator.evaluator, locator.parsed)
    if hasattr(locator, "anchor_cells"):  # the formula recogniser ran: its cells are known
        for spec in handbuilt:
            locator.follow_dependents(spec)
            turn_if_swapped(spec, locator.parsed)
    return handbuilt + attach_only


def _orientable(spec: RegressionSpec) -> bool:
    """Found only through symmetric calls (CORREL, PEARSON, RSQ): x and y are a guess."""
    symmetric = CORRELATION_FUNCS | {"RSQ"}
    return bool(spec.uses) and all(u.function in symmetric for u in spec.uses)


def handbuilt_specs(
    workbook: Workbook, evaluator: Evaluator, parsed: dict[Key, Node]
) -> tuple[list[RegressionSpec], list[RegressionSpec]]:
    """(regressions with a hand-built slope or intercept, intercepts built from a slope cell
    that only join a regression found otherwise). A block copied elsewhere with the very same
    numbers is one regression, its second slope cell a second reported cell."""
    finder = HandbuiltFinder(workbook, evaluator, parsed)
    found = finder.find()  # in formula order: sheet by sheet, row by row
    specs: dict[tuple[Ref, Ref, bool], RegressionSpec] = {}
    attach_only: dict[tuple[Ref, Ref, bool], RegressionSpec] = {}
    for item in found:
        standalone = item.reading != "slope-cell"
        key = (item.y, item.x, item.reading != "through-origin")
        table = specs if standalone or key in specs else attach_only
        spec = table.get(key)
        if spec is None:
            spec = RegressionSpec(
                id=f"{item.cell.sheet}/{item.cell.coord}",
                sheet=item.cell.sheet,
                x=item.x,
                y=item.y,
                intercept=key[2],
                found_by="hand-built",
            )
            table[key] = spec
        _put(spec, item)
    merged: list[RegressionSpec] = []
    signatures: dict[tuple[Any, ...], RegressionSpec] = {}
    for spec in specs.values():
        signature = _data_signature(finder, spec)
        signature = (spec.sheet, signature) if signature is not None else None
        twin = signatures.get(signature) if signature is not None else None
        if twin is None:
            if signature is not None:
                signatures[signature] = spec
            merged.append(spec)
            continue
        for stat in spec.stats.values():  # a copy of the block: its cells, not its ranges
            attach(twin, stat.key.split("@")[0], stat)
    return merged, list(attach_only.values())
