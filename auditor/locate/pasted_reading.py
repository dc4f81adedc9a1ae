"""A pasted table whose data changed by one reading: the pair of columns (or rows) whose fit
gives every number of the table once one y value is put back, and which value.

Tried by :func:`auditor.locate.pasted_near.near_match` when nothing else links a stale table to
its data (no residual output, no columns headed by the table's names): the search of typed
tables (:func:`auditor.locate.typed_fit.single_reading`) over the pairs of numeric lines of the
workbook with as many values as the table has observations, nearest to the table first, whose x
still has the mean square the standard errors imply (SE(b₀)² / SE(b₁)² = Σx² / n).
"""

from __future__ import annotations

import math

from auditor.formula.syntax import Ref
from auditor.locate.pasted_data import DataIndex
from auditor.locate.pasted_record import PastedTable
from auditor.locate.typed_fit import COMPARED, single_reading
from auditor.locate.typed_record import TypedTable
from auditor.locate.typed_source import MAX_TRIED, candidates
from auditor.read.workbook import Workbook


def one_reading(
    workbook: Workbook, table: PastedTable, index: DataIndex
) -> tuple[Ref, Ref, str] | None:
    """(x, y, evidence) when one changed reading explains a one-x table; else None."""
    if table.k != 1 or not table.intercept or table.n < 4:
        return None
    if len(table.standard_errors) < 2 or not min(table.standard_errors) > 0:
        return None
    cells = {
        role: cell
        for role, cell in table.cells.items()
        if role in (*COMPARED, "p_slope")
        and isinstance(cell.value, (int, float))
        and not isinstance(cell.value, bool)
        and math.isfinite(float(cell.value))
    }
    if "slope" not in cells or len(cells) < 3:
        return None
    typed = TypedTable(table.sheet, cells, {}, df_options=(table.n - 2,))
    pairs = [p for p in candidates(workbook, index, set()) if p.n == table.n]
    pairs.sort(key=lambda p: (p.x.sheet != table.sheet, p.y.line - p.x.line))
    # x did not change: SE(b0)² / SE(b1)² = Σx² / n holds whatever y became
    ratio = (table.standard_errors[0] / table.standard_errors[1]) ** 2
    for pair in pairs[:MAX_TRIED]:
        for oriented in (pair, pair.swapped()):
            x_values, y_values = oriented.values()
            if not math.isclose(float(x_values @ x_values) / table.n, ratio, rel_tol=1e-6):
                continue
            readings = single_reading(typed, x_values, y_values)
            if len(readings) == 1:
                x_ref, y_ref = oriented.refs()
                found = readings[0]
                cell = oriented.y.ref(oriented.start - oriented.y.start + found.index, 1)
                return (
                    x_ref,
                    y_ref,
                    f"{x_ref.address} and {y_ref.address} give every number of the table with "
                    f"the reading in {cell.address} at {found.then:.6g}, where it now holds "
                    f"{found.now:.6g} (one reading changed since the table was pasted)",
                )
    return None
