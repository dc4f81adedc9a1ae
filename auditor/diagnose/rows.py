"""Row-subset and stale-value mistakes in the reviewer's words.

:mod:`auditor.diagnose.rowsearch` finds the rows that reproduce a reported number; this module says
which mistake those rows are (a total row taken in, a number stored as text skipped, ranges that
stop short, a value pasted before rows changed) and how to fix it. A typed or stale stored value
that nothing reproduces is explained by :func:`stale_fallback`.
"""

from __future__ import annotations

import math
import re
from typing import TYPE_CHECKING

import numpy as np

from auditor.diagnose.basis import Basis, Candidate, Evidence, g, pair, stat_name
from auditor.diagnose.fixes import intended_ranges
from auditor.diagnose.rowsearch import BoolArray, RowTable
from auditor.grid import column_index, column_letter
from auditor.model import ReportedValue
from auditor.wording import point_word, rows_text

if TYPE_CHECKING:  # only annotations: the checks package imports auditor.diagnose.engine (no cycle)
    from auditor.context import RegressionContext

# A formula over the whole table for each statistic a stale value should be replaced by.
FORMULAS = {
    "slope": "=SLOPE({y}, {x})",
    "intercept": "=INTERCEPT({y}, {x})",
    "residual_sd": "=STEYX({y}, {x})",
    "r_squared": "=RSQ({y}, {x})",
    "n": "=COUNT({x})",
    "se_slope": "=STEYX({y}, {x})/SQRT(DEVSQ({x}))",
    "df": "=COUNT({x})-2",
}


def stale_fallback(
    value: ReportedValue, context: RegressionContext, basis: Basis, reported: float
) -> Candidate:
    name = stat_name(basis.stat, basis.j, context.fit.k)
    intended = g(value.intended) if value.intended is not None else "no value"
    if value.source in ("typed", "text"):
        formula = FORMULAS.get(basis.stat, "a formula over {y} and {x}")
        message = (
            f"the typed {name} {g(reported)} matches no computation from the current data "
            f"(the {context.data.n} rows give {intended}; no slip in a formula and no rows left "
            "out give it): it was typed or pasted before the data changed"
        )
        fix = (
            f"replace the typed value by {formula.format(y=basis.y_range, x=basis.x_range)}, "
            "so that it follows the data"
        )
    else:
        message = (
            f"the stored {name} {g(reported)} is out of date: its formula {value.formula} now "
            f"gives {g(value.as_written or math.nan)} (the intended value is {intended})"
        )
        fix = "recalculate the workbook (or re-enter the formula) and re-check the figures"
    return Candidate("stale-value", reported, message, fix, {"matched": "no current computation"})


def subset_candidate(
    mask: BoolArray,
    table: RowTable,
    value: ReportedValue,
    context: RegressionContext,
    basis: Basis,
    exact: float,
    stale: bool,
) -> Candidate:
    across = context.spec.in_rows  # a table in rows: each point is a column

    def say(positions: list[int]) -> str:
        return rows_text(positions, across)

    word, at = point_word(across), (column_letter if across else str)
    rows = np.array(table.rows)
    left_out = [int(r) for r in rows[table.used & ~mask]]
    added = [int(r) for r in rows[~table.used & mask]]
    totals = [int(r) for r in rows[~table.used & mask & table.total]]
    texts = [int(r) for r in rows[table.used & ~mask & table.text]]
    name = stat_name(basis.stat, basis.j, context.fit.k)
    shown, intended = pair(exact, value.intended if value.intended is not None else math.nan)
    n = context.data.n
    ranges = f"{basis.y_range} and {basis.x_range}"
    evidence: Evidence = {
        "rows_left_out": say(left_out) if left_out else "",
        "rows_added": say(added) if added else "",
        "n_used": int(mask.sum()),
    }
    if totals:
        message = (
            f"the ranges take in the total {say(totals)}: with it the {name} is "
            f"{shown}; the {n} data {word}s give {intended}"
        )
        meant = intended_ranges(context.spec, context.data)
        if meant is not None:  # the rows of the table without the total, not the faulty range
            ranges = f"{meant[1].address} and {meant[0].address}"
        return Candidate(
            "total-row",
            exact,
            message,
            f"end the ranges {'before' if across else 'above'} the total {word}: {ranges}",
            evidence,
        )
    if texts:
        cells = [cell for cell, _ in context.data.parsed if _row_of(cell, across) in texts]
        where = ", ".join(cells) or say(texts)
        message = (
            f"{where} holds a number stored as text, which SLOPE, INTERCEPT, STEYX and RSQ "
            f"skip: without {say(texts)} the {name} is {shown}; with it read as "
            f"a number, {intended}"
        )
        fix = f"convert {where} to a number (re-type it), so that every formula sees it"
        return Candidate("text-number", exact, message, fix, evidence)
    if left_out and not added and stale:
        word = "stored" if value.source == "stored" else "typed"
        message = (
            f"the {word} {name} {shown} matches the data without {say(left_out)} "
            f"(added or changed later?); all {n} {word}s give {intended}"
        )
        formula = FORMULAS.get(basis.stat, "a formula over {y} and {x}")
        fix = (
            f"replace the value by {formula.format(y=basis.y_range, x=basis.x_range)}, so "
            "that it follows the data"
        )
        return Candidate("stale-value", exact, message, fix, evidence)
    if left_out and not added:
        kept = [int(r) for r in rows[mask]]
        if all(r > kept[-1] for r in left_out):
            where = f"the ranges stop at {word} {at(kept[-1])}"
        elif all(r < kept[0] for r in left_out):
            where = f"the ranges start at {word} {at(kept[0])}"
        else:
            where = f"the ranges cover {word}s {at(kept[0])}–{at(kept[-1])} only"
        message = (
            f"{where}, leaving out {say(left_out)}: over the {len(kept)} {word}s left "
            f"the {name} is {shown}; the whole table ({n} {word}s) gives {intended}"
        )
        return Candidate(
            "range-short",
            exact,
            message,
            f"extend the ranges to the whole table: {ranges}",
            evidence,
        )
    message = (
        f"the {name} {shown} is the fit over {say([int(r) for r in rows[mask]])}"
        f", not over the table's {n} {word}s ({intended})"
    )
    return Candidate("range-mismatch", exact, message, f"make every formula use {ranges}", evidence)


def _row_of(cell: str, across: bool = False) -> int:
    """The row of ``Sheet!B7`` (7), or with ``across`` its column (2)."""
    found = re.search(r"([A-Z]+)(\d+)$", cell)
    if found is None:
        return -1
    return column_index(found.group(1)) if across else int(found.group(2))
