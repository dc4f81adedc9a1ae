"""Typed cells a bound statistic reads: a p computed from a df someone typed into a cell.

A p-value ``=T.DIST.2T(ABS(C6), C8)`` whose C8 holds a typed 11 reports that df as much as a
``=COUNT(x)-2`` would: the df is a reported statistic of the same regression, reached through the
reference chain. Beside its label the labelled-constants step finds it; in a grid of regressions
(C8 behind B8, away from the label in A8) only the chain does.
"""

from __future__ import annotations

from auditor.formula.syntax import Call, Node, RefNode, walk
from auditor.locate.spec import RegressionSpec
from auditor.model import stat_base
from auditor.read.workbook import Cell, Workbook

# Functions of the t distribution whose second argument is the degrees of freedom.
T_DISTRIBUTION = frozenset({"TDIST", "T.DIST", "T.DIST.2T", "T.DIST.RT"})


def typed_df_cells(
    workbook: Workbook, parsed: dict[tuple[str, int, int], Node], spec: RegressionSpec
) -> list[Cell]:
    """Typed numbers that one of the regression's p cells reads as its df (not yet bound)."""
    bound = {s.cell.address for s in spec.stats.values()}
    found: list[Cell] = []
    for key, stat in spec.stats.items():
        if stat_base(key) not in ("p_slope", "p_intercept"):
            continue
        node = parsed.get((stat.cell.sheet, stat.cell.row, stat.cell.col))
        if node is None:
            continue
        for call in (n for n in walk(node) if isinstance(n, Call)):
            if call.name.removeprefix("_xlfn.") not in T_DISTRIBUTION or len(call.args) < 2:
                continue
            df_arg = call.args[1]
            if not (isinstance(df_arg, RefNode) and df_arg.ref.is_cell):
                continue
            cell = workbook.cell(df_arg.ref.sheet, df_arg.ref.r1, df_arg.ref.c1)
            if cell is None or cell.formula or cell.address in bound:
                continue
            if not isinstance(cell.value, (int, float)) or isinstance(cell.value, bool):
                continue
            found.append(cell)
            bound.add(cell.address)
    return found
