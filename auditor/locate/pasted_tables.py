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
:class:`PastedTable` by the numbers they share (residual df, k, n, R²) and by nearness, so a
grid of blocks on one sheet pairs each coefficients table with its own analysis of variance.
Only constant cells count: a table with formulas is found by the formula recognisers.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from auditor.locate.pasted_parts import (
    MAX_GAP_ROWS,
    Anova,
    CoefficientRow,
    Grid,
    ResidualOutput,
    StatsBlock,
    anchors,
    anova_at,
    anova_r2,
    close,
    coefficient_tables,
    confidence_levels,
    constant_numbers,
    edited_anova,
    edited_stats,
    residual_df,
    stats_at,
)
from auditor.read.workbook import Cell, Sheet, Workbook

RESIDUAL_GAP_ROWS = 12  # how far below its coefficients the residual output starts


@dataclass
class PastedTable:
    """One pasted regression: its cells by statistic key and what its numbers say."""

    sheet: str
    k: int
    intercept: bool
    df: int
    n: int
    coefficients: list[float]  # intercept first (0 when forced through the origin), then slopes
    standard_errors: list[float]
    levels: list[float]  # confidence level of each pair of bounds
    cells: dict[str, Cell] = field(default_factory=dict)
    x_labels: list[str] = field(default_factory=list)
    y_label: str = ""
    ss_total: float | None = None
    ss_residual: float | None = None
    r_squared: float | None = None
    residual_output: ResidualOutput | None = None
    footprint: set[tuple[int, int]] = field(default_factory=set)  # (row, col) on ``sheet``
    consistent: list[bool] = field(default_factory=list)  # per coefficient: not edited since

    @property
    def slopes(self) -> list[float]:
        return self.coefficients[1:]

    @property
    def mse(self) -> float | None:
        return None if self.ss_residual is None or self.df <= 0 else self.ss_residual / self.df

    @property
    def anchor(self) -> Cell:
        return min(self.cells.values(), key=lambda c: (c.row, c.col))


def _text(sheet: Sheet, r: int, c: int) -> str:
    value = sheet.value(r, c)
    return value.strip() if isinstance(value, str) else ""


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
        grid = constant_numbers(sheet)
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
    _put_coefficient_cells(sheet, table, run)
    if anova is not None:
        _put_anova_cells(sheet, table, anova)
    elif (edited := edited_anova(grid, top, col, k, df, n)) is not None:
        _put_anova_cells(sheet, table, edited, trusted=False)
    if block is not None:
        _put_stats_cells(sheet, table, block)
    elif (place := edited_stats(grid, top, col, n)) is not None:
        keys = ("multiple_r", "r_squared", "adj_r_squared", "residual_sd", "n")
        for offset, key in enumerate(keys):
            _put(table, sheet, key, place[0] + offset, place[1])
    table.residual_output = _residual_output(sheet, grid, table, top + len(run))
    return table


def _cell(sheet: Sheet, r: int, c: int) -> Cell:
    found = sheet.get(r, c)
    return found if found is not None else Cell(sheet.name, r, c, None)


def _put(table: PastedTable, sheet: Sheet, key: str, r: int, c: int) -> None:
    table.cells[key] = _cell(sheet, r, c)
    table.footprint.add((r, c))


def _put_coefficient_cells(sheet: Sheet, table: PastedTable, run: list[CoefficientRow]) -> None:
    for index, row in enumerate(run):
        is_intercept = table.intercept and index == 0
        j = index if table.intercept else index + 1
        suffix = "" if table.k == 1 else f"[{j}]"
        what = "intercept" if is_intercept else "slope"
        names = [what, f"se_{what}", f"t_{what}", f"p_{what}"]
        for offset, name in enumerate(names):
            _put(table, sheet, name + ("" if is_intercept else suffix), row.row, row.col + offset)
        for pair, level in enumerate(table.levels):
            tag = "" if pair == 0 else f"@{level * 100:g}%"
            base = "" if is_intercept else suffix
            c = row.col + 4 + 2 * pair
            _put(table, sheet, f"ci_{what}_low{base}{tag}", row.row, c)
            _put(table, sheet, f"ci_{what}_high{base}{tag}", row.row, c + 1)
        if not is_intercept:
            table.x_labels.append(_text(sheet, row.row, row.col - 1))
        table.footprint.add((row.row, row.col - 1))
    for c in range(run[0].col - 1, run[0].col + 4 + 2 * len(table.levels)):
        table.footprint.add((run[0].row - 1, c))


def _put_anova_cells(sheet: Sheet, table: PastedTable, anova: Anova, trusted: bool = True) -> None:
    r, c = anova.row, anova.col
    layout = {
        "df_regression": (r, c),
        "ss_regression": (r, c + 1),
        "ms_regression": (r, c + 2),
        "f": (r, c + 3),
        "df": (r + 1, c),
        "ss_residual": (r + 1, c + 1),
        "ms_residual": (r + 1, c + 2),
        "df_total": (r + 2, c),
        "ss_total": (r + 2, c + 1),
    }
    if anova.has_significance:
        layout["f_p"] = (r, c + 4)
    for key, (row, col) in layout.items():
        _put(table, sheet, key, row, col)
    if not trusted:
        return  # an edited number would mislead the search: its cells are only compared
    table.ss_total, table.ss_residual = anova.ss_total, anova.ss_residual
    table.r_squared = anova_r2(anova)


def _put_stats_cells(sheet: Sheet, table: PastedTable, block: StatsBlock) -> None:
    keys = ("multiple_r", "r_squared", "adj_r_squared", "residual_sd", "n")
    for offset, key in enumerate(keys):
        _put(table, sheet, key, block.row + offset, block.col)
    table.r_squared = block.r_squared
    if table.ss_residual is None:
        table.ss_residual = block.residual_sd**2 * table.df
    if table.ss_total is None and block.r_squared < 1.0:
        table.ss_total = table.ss_residual / (1.0 - block.r_squared)


def _residual_output(
    sheet: Sheet, grid: Grid, table: PastedTable, below: int
) -> ResidualOutput | None:
    """Observation numbers 1…n with predicted values and residuals beside them: the next numbers
    below the table (another table's numbers in between mean the output is not this one's)."""
    n = table.n
    columns = range(max(1, table.anchor.col - 3), table.anchor.col + 9)
    for r in range(below, below + RESIDUAL_GAP_ROWS):
        if any((r - 1, c) in grid for c in columns if r > below):
            return None
        for c in range(max(1, table.anchor.col - 3), table.anchor.col + 3):
            if grid.get((r, c)) != 1.0 or grid.get((r + n - 1, c)) != float(n):
                continue
            if any(grid.get((r + i, c)) != float(i + 1) for i in range(n)):
                continue
            predicted = [grid.get((r + i, c + 1)) for i in range(n)]
            residuals = [grid.get((r + i, c + 2)) for i in range(n)]
            if any(v is None for v in predicted) or any(v is None for v in residuals):
                continue
            output = ResidualOutput(
                r,
                c,
                [float(v) for v in predicted],  # type: ignore[arg-type]
                [float(v) for v in residuals],  # type: ignore[arg-type]
                None,
            )
            if all((r + i, c + 3) in grid for i in range(n)):
                output.standard = [grid[(r + i, c + 3)] for i in range(n)]
            output.probability_col = _probability_col(grid, r, c + 3, n)
            if output.probability_col is not None:
                output.sorted_y = [grid[(r + i, output.probability_col + 1)] for i in range(n)]
            width = 4 if output.standard is not None else 3
            last = output.probability_col + 1 if output.probability_col else c + width - 1
            for i in range(-1, n):
                for cc in range(c, last + 1):
                    table.footprint.add((r + i, cc))
            header = _text(sheet, r - 1, c + 1)
            table.y_label = header.split(" ", 1)[1].strip() if " " in header else ""
            return output
    return None


def _probability_col(grid: Grid, r: int, start: int, n: int) -> int | None:
    """Percentiles 100·(i − ½)/n in one column, the sorted y values in the next."""
    for c in range(start, start + 4):
        if all(close(grid.get((r + i, c), -1.0), 100.0 * (i + 0.5) / n) for i in range(n)):
            if all((r + i, c + 1) in grid for i in range(n)):
                return c
    return None
