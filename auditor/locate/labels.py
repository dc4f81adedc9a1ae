"""Regressions and reported values found by their labels: typed numbers beside "Slope"."""

from __future__ import annotations

import re

import numpy as np

from auditor.formula.syntax import Ref
from auditor.locate.blocks import role_in_list, same_block
from auditor.locate.formulas import FormulaLocator
from auditor.locate.pasted_spec import in_pasted_table
from auditor.locate.roles import (
    role_from_label,
)
from auditor.locate.spec import RegressionSpec, StatCell, label_for
from auditor.locate.text_cells import text_cells
from auditor.model import stat_base
from auditor.read.workbook import Cell


def from_labels(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """A typed number beside "Slope" with a two-column numeric table to its left."""
    specs = []
    for sheet in locator.workbook.sheets.values():
        labels = [
            cell
            for cell in text_cells(locator.workbook, sheet)
            if isinstance(cell.value, str) and role_from_label(cell.value) == "slope"
        ]  # the few "Slope" labels, in reading order: not a sort of every cell
        for cell in sorted(labels, key=lambda c: (c.row, c.col)):
            target = sheet.get(cell.row, cell.col + 1)
            if (
                target is None
                or target.formula
                or isinstance(target.value, bool)
                or not isinstance(target.value, (int, float))
                or target.address in taken
            ):
                continue
            pair = _table_left_of(locator, sheet.name, cell.col)
            if pair is None or not _reproduces(locator, pair, float(target.value)):
                continue  # no table beside it gives this slope: nothing says it is its data
            x, y = pair
            spec = RegressionSpec(f"{sheet.name}/{target.coord}", sheet.name, x, y, True, "labels")
            spec.stats["slope"] = StatCell("slope", target, "label")
            taken.add(target.address)
            specs.append(spec)
    return specs


def _reproduces(locator: FormulaLocator, pair: tuple[Ref, Ref], typed: float) -> bool:
    """The table's least-squares slope agrees with the typed one to 5 % (a typed copy keeps a
    few digits; a number of another model, such as a logistic b1 beside 0/1 data, is no slope
    of the table, and a table found by position alone is no evidence)."""
    sheet = locator.workbook.sheet(pair[0].sheet)
    if sheet is None:
        return False
    x, y = pair
    x_values = np.array([sheet.value(r, x.c1) for r in range(x.r1, x.r2 + 1)], dtype=float)
    y_values = np.array([sheet.value(r, y.c1) for r in range(y.r1, y.r2 + 1)], dtype=float)
    sxx = float(((x_values - x_values.mean()) ** 2).sum())
    if not sxx > 0.0:
        return False
    slope = float(((x_values - x_values.mean()) * (y_values - y_values.mean())).sum() / sxx)
    return abs(slope - typed) <= 0.05 * max(abs(slope), abs(typed))


def _table_left_of(locator: FormulaLocator, sheet_name: str, col: int) -> tuple[Ref, Ref] | None:
    """The nearest pair of adjacent columns left of ``col`` with 3+ numeric rows together."""
    sheet = locator.workbook.sheet(sheet_name)
    if sheet is None:
        return None

    def numeric(r: int, c: int) -> bool:
        value = sheet.value(r, c)
        return isinstance(value, (int, float)) and not isinstance(value, bool)

    for c in range(col - 2, 0, -1):
        rows = [r for r in range(1, sheet.max_row + 1) if numeric(r, c) and numeric(r, c + 1)]
        if len(rows) < 3:
            continue
        start = end = rows[0]
        best = (start, end)
        for r in rows[1:]:
            end = r if r == end + 1 else end
            if r != end:
                start = end = r
            if end - start > best[1] - best[0]:
                best = (start, end)
        if best[1] - best[0] >= 2:
            return (
                Ref(sheet.name, best[0], c, best[1], c),
                Ref(sheet.name, best[0], c + 1, best[1], c + 1),
            )
    return None


def attach_labelled_constants(locator: FormulaLocator, spec: RegressionSpec) -> None:
    """Typed numbers beside statistic labels near the block are its reported values."""
    cells = [s.cell for s in spec.stats.values()] or [
        Cell(spec.y.sheet, spec.y.r1, spec.y.c2 + 1, None)
    ]
    sheet = locator.workbook.sheet(cells[0].sheet)
    if sheet is None:
        return
    data_columns = [spec.x, spec.y]
    targets = {(s.cell.row, s.cell.col) for s in spec.stats.values() if s.cell.sheet == sheet.name}
    rows = range(min(c.row for c in cells) - 3, max(c.row for c in cells) + 6)
    cols = range(min(c.col for c in cells) - 3, max(c.col for c in cells) + 5)
    for r in rows:
        for c in cols:
            cell = sheet.get(r, c)
            if cell is None or cell.formula or cell.value is None or isinstance(cell.value, bool):
                continue
            if isinstance(cell.value, str) and not looks_like_claim(cell.value):
                continue
            if any(r_.c1 <= c <= r_.c2 and r_.sheet == cell.sheet for r_ in data_columns):
                continue  # a value in a data column is data, whatever its header says
            if in_pasted_table(locator.workbook, cell.sheet, r, c):
                continue  # a pasted table's numbers are its own, whatever labels they carry
            label = label_for(locator.workbook, cell)
            role = role_from_label(label) if label else None
            label_col = next(
                (lc for lc in range(c - 1, max(0, c - 4), -1) if sheet.value(r, lc) == label),
                None,
            )
            if role and label_col is not None:
                role = role_in_list(sheet, r, label_col, role)
            if not role or any(stat_base(k) == role for k in spec.stats):
                continue
            if not same_block(sheet, (r, c), targets):
                continue  # another block's number (a pasted table beside the formulas)
            locator._put(spec, role, StatCell(role, cell, "label"))


def block_title(locator: FormulaLocator, spec: RegressionSpec) -> str:
    if not spec.stats:
        return ""
    top = min(spec.stats.values(), key=lambda s: (s.cell.row, s.cell.col)).cell
    sheet = locator.workbook.sheet(top.sheet)
    if sheet is None:
        return ""
    for r in range(top.row - 1, max(0, top.row - 4), -1):
        for c in (top.col - 1, top.col, top.col - 2):
            cell = sheet.get(r, c) if c >= 1 else None
            if cell is not None and isinstance(cell.value, str) and not cell.formula:
                if role_from_label(cell.value) is None and len(cell.value) > 3:
                    return cell.value
    return ""


_CLAIM = re.compile(
    r"^\s*(p\s*)?([<>≤≥]=?|=)?\s*[-−]?\d*\.?\d+(e-?\d+)?\s*%?\s*$|^\s*n\.?s\.?\s*$", re.I
)


def looks_like_claim(text: str) -> bool:
    return bool(_CLAIM.match(text))
