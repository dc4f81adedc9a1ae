"""Every reported-statistic cell belongs to exactly one regression.

Recognisers bind cells one regression at a time, so a cell built on the statistics of two of
them can be claimed by both (a p from one column's t and, by a copy slip, the next column's df;
a typed figure between two blocks) and would then carry two contradictory recomputed values.
:func:`single_owner` keeps each cell with one regression, chosen by what its formula reads:

1. a regression's own call (SLOPE, LINEST, … naming its data) is never given away;
2. otherwise the reference chain: each input the formula reads counts for the regression it
   belongs to — its data ranges, and its statistic cells, those that carry the number (slope,
   SE, t, R², residual SD) twice as much as those that only count (df, n); a p computed from a
   t cell therefore goes where the t goes, and the t where its slope and SE go;
3. a tie (or a typed cell, which reads nothing) goes to the regression whose other cells share
   its column or row: the block it sits in.
"""

from __future__ import annotations

from collections import defaultdict

from auditor.formula.syntax import Node, Ref, references
from auditor.locate.spec import RegressionSpec, StatCell, overlaps
from auditor.model import stat_base

# Statistics whose value a dependent's number is computed from; the rest (df, n) only count.
CARRIERS = frozenset(
    {"slope", "intercept", "se_slope", "se_intercept", "t_slope", "t_intercept"}
    | {"residual_sd", "r_squared", "r", "ss_regression", "ss_residual", "f"}
)

Address = tuple[str, int, int]  # (sheet lower-cased, row, column)


def _address(stat: StatCell) -> Address:
    return stat.cell.sheet.lower(), stat.cell.row, stat.cell.col


def _cells_of(ref: Ref) -> list[Address]:
    if (ref.r2 - ref.r1 + 1) * (ref.c2 - ref.c1 + 1) > 64:
        return []  # a data range, not a statistic cell: counted by overlap with the data
    return [
        (ref.sheet.lower(), r, c)
        for r in range(ref.r1, ref.r2 + 1)
        for c in range(ref.c1, ref.c2 + 1)
    ]


def _chain_weight(spec: RegressionSpec, refs: list[Ref]) -> int:
    """How much of what a formula reads belongs to ``spec`` (rule 2)."""
    roles = {_address(stat): stat_base(key) for key, stat in spec.stats.items()}
    weight = 0
    for ref in refs:
        if overlaps(ref, spec.x) or overlaps(ref, spec.y):
            weight += 2
            continue
        for address in _cells_of(ref):
            role = roles.get(address)
            if role is not None:
                weight += 2 if role in CARRIERS else 1
    return weight


def _alignment(spec: RegressionSpec, stat: StatCell) -> int:
    """Cells of ``spec`` (other than this one) in the same column or row of the same sheet."""
    here = _address(stat)
    return sum(
        1
        for other in spec.stats.values()
        if _address(other) != here
        and other.cell.sheet.lower() == here[0]
        and (other.cell.col == here[2] or other.cell.row == here[1])
    )


def owner(claimants: list[RegressionSpec], stat: StatCell, node: Node | None) -> RegressionSpec:
    """The one regression a cell claimed by several belongs to (rules 1–3 of the module)."""
    here = _address(stat)
    for spec in claimants:
        if any((u.cell.sheet.lower(), u.cell.row, u.cell.col) == here for u in spec.uses):
            return spec
    refs = references(node) if node is not None else []

    def rank(spec: RegressionSpec) -> tuple[int, int]:
        return _chain_weight(spec, refs), _alignment(spec, stat)

    return max(claimants, key=rank)  # max keeps the first of equals: the earlier recogniser's


def single_owner(
    specs: list[RegressionSpec], parsed: dict[tuple[str, int, int], Node]
) -> list[RegressionSpec]:
    """Each statistic cell kept by one regression only; the others lose their claim to it."""
    claims: dict[Address, list[RegressionSpec]] = defaultdict(list)
    for spec in specs:
        for address in dict.fromkeys(_address(stat) for stat in spec.stats.values()):
            claims[address].append(spec)
    for address, claimants in claims.items():
        if len(claimants) < 2:
            continue
        stat = next(s for s in claimants[0].stats.values() if _address(s) == address)
        node = parsed.get((stat.cell.sheet, stat.cell.row, stat.cell.col))
        keeper = owner(claimants, stat, node)
        for spec in claimants:
            if spec is not keeper:
                spec.stats = {k: s for k, s in spec.stats.items() if _address(s) != address}
    return specs
