"""Typed statistic tables found by their structure and words, not by their data.

A block of typed numbers whose labels name regression statistics ("Slope", "SE of slope",
"t", "p-value", "R²", "df", in the languages :func:`~auditor.locate.roles.role_from_label`
reads) is a reported regression when the numbers agree with one another at the digits they
show: t = slope / SE, p = the two-sided p of t on df degrees of freedom, R² = t² / (t² + df).
Such a table is a regression even when no data in the workbook reproduce it (its data changed
since it was typed): :mod:`auditor.locate.typed_source` then finds its data by words and place.

Layouts: labels down a column with one value column per regression to their right (a column
header above each is its title: "Site 3 — turbidity vs flow"), or labels along a row with one
value row per regression below (the text left of each row is its title).
"""

from __future__ import annotations

import math

import numpy as np

from auditor.fit.distributions import t_sf
from auditor.locate.blocks import role_in_list
from auditor.locate.labels import looks_like_claim
from auditor.locate.pasted_spec import in_pasted_table
from auditor.locate.roles import role_from_label
from auditor.locate.text_cells import text_cells
from auditor.locate.typed_record import TypedTable, interval
from auditor.read.workbook import Cell, Sheet, Workbook

# The statistics a typed table is read for; the others a label may name are left alone.
TABLE_ROLES = ("slope", "intercept", "se_slope", "se_intercept", "t_slope", "p_slope",
               "r_squared", "df", "residual_sd", "n")  # fmt: skip
MIN_LABELS = 3  # slope and two more: fewer numbers cannot agree with one another
MAX_DF = 2_000  # degrees of freedom searched when the table does not show them
MAX_LINES = 60  # value columns (or rows) read beside one set of labels


def _number(cell: Cell | None) -> bool:
    return (
        cell is not None
        and cell.formula is None
        and isinstance(cell.value, (int, float))
        and not isinstance(cell.value, bool)
        and math.isfinite(float(cell.value))
    )


def cell_at(cell: Cell) -> tuple[str, int, int]:
    return cell.sheet, cell.row, cell.col


def find_typed_tables(workbook: Workbook, taken: set[str]) -> list[TypedTable]:
    """Every typed statistic table whose numbers agree with one another."""
    found: list[TypedTable] = []
    for sheet in workbook.sheets.values():
        labelled: dict[tuple[int, int], str] = {}
        for cell in text_cells(workbook, sheet):
            if isinstance(cell.value, str) and cell.formula is None and len(cell.value) <= 60:
                role = role_from_label(cell.value)
                if role in TABLE_ROLES:
                    labelled[(cell.row, cell.col)] = role_in_list(sheet, cell.row, cell.col, role)
        if not any(role == "slope" for role in labelled.values()):
            continue
        for by_rows in (False, True):
            for group in _label_groups(labelled, by_rows):
                found.extend(_tables_of_group(workbook, sheet, group, by_rows, taken))
    return found


def _label_groups(
    labelled: dict[tuple[int, int], str], by_rows: bool
) -> list[list[tuple[int, int, str]]]:
    """Runs of statistic labels down one column (or along one row), one gap allowed, split
    where a statistic repeats (two tables stacked); those holding a slope and 2+ others."""
    lines: dict[int, list[tuple[int, int]]] = {}
    for row, col in labelled:
        line, position = (row, col) if by_rows else (col, row)
        lines.setdefault(line, []).append((position, line))
    groups = []
    for line, members in lines.items():
        current: list[tuple[int, int, str]] = []
        last = -10
        for position, _ in sorted(members):
            key = (line, position) if by_rows else (position, line)
            role = labelled[key]
            if position - last > 2 or any(r == role for _, _, r in current):
                groups.append(current)
                current = []
            current.append((key[0], key[1], role))
            last = position
        groups.append(current)
    return [g for g in groups if len(g) >= MIN_LABELS and any(r == "slope" for *_, r in g)]


def _tables_of_group(
    workbook: Workbook,
    sheet: Sheet,
    group: list[tuple[int, int, str]],
    by_rows: bool,
    taken: set[str],
) -> list[TypedTable]:
    """One table per value column right of the labels (or value row below them)."""
    tables: list[TypedTable] = []
    last_hit = 0
    for step in range(1, MAX_LINES):
        cells: dict[str, Cell] = {}
        claims: dict[str, Cell] = {}
        filled = False
        for row, col, role in group:
            where = (row + step, col) if by_rows else (row, col + step)
            cell = sheet.get(*where)
            filled = filled or (cell is not None and cell.value not in (None, ""))
            if cell is None or cell.address in taken or in_pasted_table(workbook, *cell_at(cell)):
                continue
            if _number(cell):
                cells[role] = cell
            elif role == "p_slope" and isinstance(cell.value, str) and looks_like_claim(cell.value):
                claims[role] = cell
        if "slope" not in cells:
            if (filled and tables) or step - last_hit > 2:
                break  # beside the labels (a units column between), blank lines between sites
            continue
        labels = {
            role: str(sheet.value(row, col))
            for row, col, role in group
            if role in cells or role in claims
        }
        table = TypedTable(sheet.name, cells, labels, claims=claims)
        if _named_as_statistic(sheet, group, step, by_rows):
            continue  # a row "Intercept" under "Coefficients | Standard Error | t Stat": no line
        table.title = _title(sheet, group, step, by_rows)
        table.footprint = {(c.row, c.col) for c in [*cells.values(), *claims.values()]} | {
            (row, col) for row, col, _ in group
        }
        if not _consistent(table):
            if tables or step > 2:
                break  # another block's numbers (a data table, a results block)
            continue
        tables.append(table)
        last_hit = step
    return tables


def _named_as_statistic(
    sheet: Sheet, group: list[tuple[int, int, str]], step: int, by_rows: bool
) -> bool:
    """The line of values is itself named as a statistic: a coefficients table (one row per
    coefficient, its estimate, SE, t and p across), not the figures of one line."""
    first_row, first_col, _ = group[0]
    where = (first_row + step, first_col - 1) if by_rows else (first_row - 1, first_col + step)
    text = sheet.value(*where) if min(where) >= 1 else None
    return isinstance(text, str) and role_from_label(text) is not None


def _title(sheet: Sheet, group: list[tuple[int, int, str]], step: int, by_rows: bool) -> str:
    """The text above a value column's first statistic (or left of a value row), or above the
    labels: "Site 3 — turbidity vs flow"."""
    first_row, first_col, _ = group[0]
    if by_rows:
        places = [(first_row + step, first_col - k) for k in (1, 2)]
    else:
        places = [(first_row - k, first_col + step) for k in (1, 2)]
        places += [(first_row - k, first_col) for k in (1, 2)]
    for row, col in places:
        text = sheet.value(row, col) if row >= 1 and col >= 1 else None
        if isinstance(text, str) and text.strip() and role_from_label(text) is None:
            return text.strip()
    return ""


def _ratio(top: tuple[float, float], bottom: tuple[float, float]) -> tuple[float, float]:
    corners = [a / b for a in top for b in bottom]
    return min(corners), max(corners)


def _overlap(a: tuple[float, float], b: tuple[float, float]) -> bool:
    return a[0] <= b[1] and b[0] <= a[1]


def _consistent(table: TypedTable) -> bool:
    """The numbers agree with one another; records the degrees of freedom they allow."""
    get = table.cells.get
    bounds = {role: interval(cell) for role, cell in table.cells.items()}
    se, r2, p = bounds.get("se_slope"), bounds.get("r_squared"), bounds.get("p_slope")
    if se is not None and se[1] <= 0:
        return False
    if r2 is not None and not (r2[1] >= 0.0 and r2[0] <= 1.0):
        return False
    if p is not None and not (p[1] >= 0.0 and p[0] <= 1.0):
        return False
    t = bounds.get("t_slope")
    if se is not None and se[0] > 0:
        implied = _ratio(bounds["slope"], se)
        if t is not None:
            if not _overlap(t, implied):
                return False
            table.relations.append("t = slope / SE")
        t = t or implied
    dfs: np.ndarray | None = None
    for role, less in (("df", 0), ("n", 2)):  # df shown, or n (df = n − 2)
        shown = get(role)
        if shown is not None and dfs is None:
            value = float(shown.value) - less  # type: ignore[arg-type]
            if value < 1 or not value.is_integer():
                return False
            dfs = np.array([int(value)])
    if t is not None and r2 is not None and r2[0] > 0:
        low, high = sorted(abs(v) for v in t) if t[0] * t[1] > 0 else (0.0, max(map(abs, t)))
        implied_df = (low**2 * (1 - min(r2[1], 1.0)) / r2[1], high**2 * (1 - r2[0]) / r2[0])
        fits = np.arange(max(1, math.ceil(implied_df[0] - 1e-9)), math.floor(implied_df[1]) + 1)
        fits = fits[fits <= MAX_DF]
        if dfs is not None:
            if not np.isin(dfs, fits).any():
                return False
            table.relations.append("R² = t² / (t² + df)")
        elif len(fits):
            dfs = fits
        else:
            return False
    if t is not None and p is not None:
        checked = dfs is not None
        options = dfs if dfs is not None else np.arange(1, MAX_DF + 1)
        low, high = sorted(abs(v) for v in t) if t[0] * t[1] > 0 else (0.0, max(map(abs, t)))
        p_high = 2.0 * np.asarray(t_sf(low, options), dtype=float)
        p_low = 2.0 * np.asarray(t_sf(high, options), dtype=float)
        keep = (p_low <= p[1] * (1 + 1e-9)) & (p_high >= p[0] * (1 - 1e-9))
        if not keep.any():
            return False
        dfs = options[keep]
        if checked:
            table.relations.append("p = two-sided p of t on df")
    table.df_options = tuple(int(d) for d in dfs[:50]) if dfs is not None else ()
    return bool(table.relations)
