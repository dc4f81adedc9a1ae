"""Analysis tables pasted as values, recognised by the arithmetic that ties their numbers.

Spreadsheet data-analysis add-ins paste a regression as plain numbers: a statistics block
(multiple R, R², adjusted R², standard error of the regression, observations), an analysis of
variance (df, SS, MS, F, significance of F), a coefficients table (coefficient, SE, t, p, one or
two pairs of confidence bounds), and optionally residual and probability output. Their labels
follow the language of the installation, so the tables are recognised by **structure**, not by
words: every row of a coefficients table satisfies t = b / SE and p = 2·P(T_df > |t|) for one
integer df; an analysis of variance satisfies df₁ + df₂ = df_total, SSR + SSE = SST, MS = SS/df
and F = MSR/MSE; a statistics block satisfies R² = R·R and s² = MSE. These identities hold to the
digits a double carries and practically never by chance, so no list of spellings is needed.
Words are read only to name things (the x labels beside the coefficient rows, the y name in the
residual output's header, the levels written above the bounds).

The parts (:mod:`auditor.locate.pasted_parts`) are found on their own and joined into one
:class:`~auditor.locate.pasted_record.PastedTable` by the numbers they share (residual df, k, n,
R²) and by nearness, so a grid of blocks on one sheet pairs each coefficients table with its own
analysis of variance. Only constant cells count: a table with formulas is found by the formula
recognisers.
"""

from __future__ import annotations

from auditor.locate.pasted_anchors import anchors
from auditor.locate.pasted_degrees import confidence_levels, residual_df
from auditor.locate.pasted_numbers import number_grid
from auditor.locate.pasted_parts import (
    MAX_GAP_ROWS,
    Anova,
    CoefficientRow,
    Grid,
    StatsBlock,
    anova_at,
    anova_r2,
    close,
    coefficient_tables,
    edited_anova,
    edited_stats,
    stats_at,
)
from auditor.locate.pasted_record import (
    PastedTable,
    put,
    put_anova_cells,
    put_coefficient_cells,
    put_stats_cells,
)
from auditor.locate.pasted_residuals import residual_output
from auditor.read.workbook import Sheet, Workbook


def _forced_origin_row(sheet: Sheet, r: int, c: int) -> bool:
    """The add-ins' row for an intercept forced to 0: a 0 followed by error values."""
    cell, beside = sheet.get(r, c), sheet.get(r, c + 1)
    return (
        cell is not None
        and cell.formula is None
        and cell.value == 0
        and beside is not None
        and not isinstance(beside.value, (int, float))
    )


def find_tables(workbook: Workbook) -> list[PastedTable]:
    """Every pasted regression table in the workbook, in sheet order."""
    found: list[PastedTable] = []
    for sheet in workbook.sheets.values():
        grid = number_grid(sheet)
        if len(grid) < 8:
            continue
        coefficient_places, anova_places, stats_places = anchors(grid)
        anovas = [a for key in anova_places if (a := anova_at(grid, *key)) is not None]
        blocks = [s for key in stats_places if (s := stats_at(grid, *key)) is not None]
        for run in coefficient_tables(grid, coefficient_places):
            table = _assemble(sheet, grid, run, anovas, blocks)
            if table is not None:
                found.append(table)
    return found


def _nearest_above(items: list[Anova] | list[StatsBlock], row: int, col: int) -> list[int]:
    places: list[tuple[int, int]] = [(item.row, item.col) for item in items]
    order = [
        (row - r, abs(c - col), index)
        for index, (r, c) in enumerate(places)
        if 0 < row - r <= MAX_GAP_ROWS and abs(c - col) <= 3
    ]
    return [index for *_, index in sorted(order)]


def _assemble(
    sheet: Sheet,
    grid: Grid,
    run: list[CoefficientRow],
    anovas: list[Anova],
    blocks: list[StatsBlock],
) -> PastedTable | None:
    top, col = run[0].row, run[0].col
    intercept = not _forced_origin_row(sheet, top - 1, col)
    k = len(run) - 1 if intercept else len(run)
    choices: list[Anova | None] = [
        anovas[i]
        for i in _nearest_above(anovas, top, col)
        if anovas[i].df_regression in (k, len(run))
    ]
    anova, df = None, None
    for candidate in [*choices, None]:
        df = residual_df(run, candidate)
        if df is not None:
            anova = candidate
            break
    if anova is not None and intercept and anova.df_regression == len(run):
        k = len(run)  # no intercept row at all: every row is an x column
        intercept = False
    if k < 1 or df is None:
        return None
    n = df + k + (1 if intercept else 0)
    block = next(
        (
            blocks[i]
            for i in _nearest_above(blocks, top, col)
            if blocks[i].n == n
            and (anova is None or close(blocks[i].r_squared, anova_r2(anova), rel=1e-7))
        ),
        None,
    )
    if not all(row.consistent for row in run) and anova is None and block is None:
        return None  # an edited row needs the rest of an add-in's table around it
    levels = confidence_levels(run, df)
    if levels is None:
        return None
    table = PastedTable(
        sheet=sheet.name,
        k=k,
        intercept=intercept,
        df=df,
        n=n,
        coefficients=([] if intercept else [0.0]) + [r.b for r in run],
        standard_errors=([] if intercept else [0.0]) + [r.se for r in run],
        levels=levels,
        consistent=([] if intercept else [True]) + [r.consistent for r in run],
    )
    put_coefficient_cells(sheet, table, run)
    if anova is not None:
        put_anova_cells(sheet, table, anova)
    elif (edited := edited_anova(grid, top, col, k, df, n)) is not None:
        put_anova_cells(sheet, table, edited, trusted=False)
    if block is not None:
        put_stats_cells(sheet, table, block)
    elif (place := edited_stats(grid, top, col, n)) is not None:
        keys = ("multiple_r", "r_squared", "adj_r_squared", "residual_sd", "n")
        for offset, key in enumerate(keys):
            put(table, sheet, key, place[0] + offset, place[1])
    table.residual_output = residual_output(sheet, grid, table, top + len(run))
    return table
