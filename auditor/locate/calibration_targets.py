"""The tests of a coefficient against a target (slope 1, intercept 0) that a calibration shows."""

from __future__ import annotations

from dataclasses import dataclass

from auditor.formula.syntax import RefNode, walk
from auditor.locate.calibration_cells import CellKey, CurveReader, cell_address
from auditor.locate.roles import role_from_shape


@dataclass(frozen=True)
class TargetTest:
    cell: str
    coefficient: str  # "slope" | "intercept"
    target: float
    statistic: str  # "t" | "p"
    reported: float


def target_tests(reader: CurveReader) -> list[TargetTest]:
    """Cells testing slope = 1 (and intercept = 0 where it is not a located statistic), by
    the target their value implies: target = b − t·SE, from the author's own cells."""
    found: list[TargetTest] = []
    stat_cells = {k for keys in reader.cells.values() for k in keys}
    inputs = set().union(
        *(reader.cells.get(k, set()) for k in ("slope", "intercept", "se_slope", "se_intercept"))
    )
    t_cells: dict[CellKey, TargetTest] = {}
    for key, node in reader.parsed.items():
        lowered = (key[0].lower(), key[1], key[2])
        if lowered in inputs:
            continue
        refs = {
            (n.ref.sheet.lower(), n.ref.r1, n.ref.c1)
            for n in walk(node)
            if isinstance(n, RefNode) and n.ref.is_cell
        }
        test = _target_t(reader, lowered, refs, lowered in stat_cells)
        if test is not None:
            found.append(test)
            t_cells[lowered] = test
    for key, node in reader.parsed.items():
        if role_from_shape(node) != "p":
            continue
        for sub in walk(node):
            if isinstance(sub, RefNode) and sub.ref.is_cell:
                source = t_cells.get((sub.ref.sheet.lower(), sub.ref.r1, sub.ref.c1))
                p = reader.value_of((key[0].lower(), key[1], key[2]))
                if source is not None and p is not None:
                    address = cell_address(key, reader.workbook)
                    found.append(TargetTest(address, source.coefficient, source.target, "p", p))
                    break
    return found


def _target_t(
    reader: CurveReader, key: CellKey, refs: set[CellKey], located: bool
) -> TargetTest | None:
    for coefficient, se_key, targets in (
        ("slope", "se_slope", (1.0,)),
        ("intercept", "se_intercept", () if located else (0.0,)),
    ):
        coef_cells, se_cells = reader.cells.get(coefficient, set()), reader.cells.get(se_key)
        if not targets or not se_cells or not refs & coef_cells or not refs & se_cells:
            continue
        t = reader.value_of(key)
        b = reader.value_of(next(iter(refs & coef_cells)))
        se = reader.value_of(next(iter(refs & se_cells)))
        if t is None or b is None or not se:
            continue
        implied = b - t * se
        for target in targets:
            if abs(implied - target) <= 1e-6 * (abs(b) + abs(se)):
                return TargetTest(cell_address(key, reader.workbook), coefficient, target, "t", t)
    return None
