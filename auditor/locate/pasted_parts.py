"""The parts of a pasted analysis table, each found by the identities its numbers satisfy.

A coefficients row satisfies t = b / SE and p = 2·P(T_df > |t|) for one integer df, and its
bounds lie symmetric about b at the t quantile of their level; an analysis of variance satisfies
df₁ + df₂ = df_total, SSR + SSE = SST, MS = SS/df and F = MSR/MSE; a statistics block satisfies
R² = R·R. Candidates are found loosely (:mod:`auditor.locate.pasted_anchors`), then each is
verified exactly here. A part with one number typed over after pasting is still placed by the counts
the rest of the table fixes (k, the residual df, n), so the edited number is compared, not lost.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

IDENTITY_RELATIVE = 1e-6  # pasted doubles satisfy their identities far tighter than this
MAX_X_COLUMNS = 16  # the add-ins accept at most 16 x columns (from memory)
MAX_GAP_ROWS = 40  # how far above its coefficients an analysis of variance or statistics sits


Grid = Mapping[tuple[int, int], float]  # a NumberGrid (auditor.locate.pasted_numbers) or a dict


def close(a: float, b: float, rel: float = IDENTITY_RELATIVE, floor: float = 0.0) -> bool:
    return abs(a - b) <= rel * max(abs(a), abs(b)) + floor


@dataclass
class CoefficientRow:
    row: int
    col: int  # column of the coefficient
    b: float
    se: float
    t: float
    p: float
    bounds: list[tuple[float, float]]  # (lower, upper) pairs in the row, left to right
    consistent: bool = True  # False: a number of the row was edited after pasting


@dataclass
class Anova:
    row: int  # the regression row
    col: int  # the df column
    df_regression: int
    df_residual: int
    ss_regression: float
    ss_residual: float
    ss_total: float
    has_significance: bool


@dataclass
class StatsBlock:
    row: int  # multiple R
    col: int
    multiple_r: float
    r_squared: float
    residual_sd: float
    n: int


@dataclass
class ResidualOutput:
    first_row: int
    index_col: int  # 1, 2, …, n
    predicted: list[float]
    residuals: list[float]
    standard: list[float] | None  # residuals over the root of SSE / (n − 1), when pasted
    probability_col: int | None = None  # percentile column; the sorted y values follow it
    sorted_y: list[float] | None = None


def _coefficient_row(grid: Grid, r: int, c: int) -> CoefficientRow | None:
    values = [grid.get((r, c + i)) for i in range(4)]
    if any(v is None for v in values):
        return None
    b, se, t, p = (float(v) for v in values)  # type: ignore[arg-type]
    if se <= 0.0 or not 0.0 <= p <= 1.0 or not close(t, b / se, floor=1e-300):
        return None
    if t == 0.0 and b != 0.0:
        return None
    bounds: list[tuple[float, float]] = []
    col = c + 4
    while len(bounds) < 2 and (r, col) in grid and (r, col + 1) in grid:
        low, high = grid[(r, col)], grid[(r, col + 1)]
        if not (low <= b <= high and close(b - low, high - b, floor=1e-12 * abs(b))):
            break
        bounds.append((low, high))
        col += 2
    return CoefficientRow(r, c, b, se, t, p, bounds)


def _edited_row(grid: Grid, r: int, c: int) -> CoefficientRow | None:
    """A row with a coefficient table's shape whose numbers no longer agree (one typed over):
    kept inside a table of consistent rows, so that the edited number is compared, not lost."""
    values = [grid.get((r, c + i)) for i in range(4)]
    if any(v is None for v in values):
        return None
    b, se, t, p = (float(v) for v in values)  # type: ignore[arg-type]
    bounds: list[tuple[float, float]] = []
    col = c + 4
    while len(bounds) < 2 and (r, col) in grid and (r, col + 1) in grid:
        bounds.append((grid[(r, col)], grid[(r, col + 1)]))
        col += 2
    return CoefficientRow(r, c, b, se, t, p, bounds, consistent=False)


def anova_at(grid: Grid, r: int, c: int) -> Anova | None:
    cells = [grid.get(key) for key in ((r, c), (r + 1, c), (r + 2, c))]
    if any(v is None for v in cells):
        return None
    df1, df2, df_total = (float(v) for v in cells)  # type: ignore[arg-type]
    if not all(v == int(v) and v >= 0 for v in (df1, df2, df_total)) or df1 + df2 != df_total:
        return None
    ssr, sse, sst = grid.get((r, c + 1)), grid.get((r + 1, c + 1)), grid.get((r + 2, c + 1))
    msr, mse, f = grid.get((r, c + 2)), grid.get((r + 1, c + 2)), grid.get((r, c + 3))
    if ssr is None or sse is None or sst is None or df1 < 1 or df2 < 1:
        return None
    if not close(ssr + sse, sst, floor=1e-12 * abs(sst)):
        return None
    if msr is None or mse is None or not close(msr, ssr / df1) or not close(mse, sse / df2):
        return None
    if f is None or (mse > 0 and not close(f, msr / mse)):
        return None
    significance = grid.get((r, c + 4))
    return Anova(
        r, c, int(df1), int(df2), ssr, sse, sst, significance is not None and 0 <= significance <= 1
    )


def stats_at(grid: Grid, r: int, c: int) -> StatsBlock | None:
    values = [grid.get((r + i, c)) for i in range(5)]
    if any(v is None for v in values):
        return None
    multiple_r, r_squared, adjusted, s, n = (float(v) for v in values)  # type: ignore[arg-type]
    if not (0.0 <= r_squared <= 1.0 and multiple_r >= 0 and s >= 0 and adjusted <= r_squared):
        return None
    if n != int(n) or n < 3 or not close(multiple_r * multiple_r, r_squared, floor=1e-15):
        return None
    return StatsBlock(r, c, multiple_r, r_squared, s, int(n))


def coefficient_tables(grid: Grid, anchors: list[tuple[int, int]]) -> list[list[CoefficientRow]]:
    rows = {
        (r, c): found for (r, c) in anchors if (found := _coefficient_row(grid, r, c)) is not None
    }
    tables: list[list[CoefficientRow]] = []
    seen: set[tuple[int, int]] = set()
    for (r, c), seed in sorted(rows.items()):
        if (r, c) in seen:
            continue
        run = [seed]
        # Extend over rows of the same shape: consistent ones, and edited ones between them.
        for step in (-1, 1):
            while len(run) <= MAX_X_COLUMNS:
                edge = run[0].row - 1 if step < 0 else run[-1].row + 1
                row = rows.get((edge, c)) or _edited_row(grid, edge, c)
                if row is None:
                    break
                if step < 0:
                    run.insert(0, row)
                else:
                    run.append(row)
        seen.update((row.row, c) for row in run)
        edited = sum(not row.consistent for row in run)
        if edited > max(1, len(run) // 3) or not run[0].consistent and not run[-1].consistent:
            continue  # mostly numbers that disagree: not a table, or a broken one
        # A whole table only: a row of numbers just above or below that is not of the shape
        # (an x whose slope could not be estimated: #NUM!) means the table is broken.
        if (run[0].row - 1, c + 1) in grid or (run[-1].row + 1, c + 1) in grid:
            continue
        tables.append(run)
    return tables


def edited_anova(grid: Grid, top: int, col: int, k: int, df: int, n: int) -> Anova | None:
    """An analysis of variance whose numbers no longer agree (one typed over), found by its df
    column, which the coefficients fix (k, the residual df, the total): its cells are compared,
    its numbers not trusted for the search."""
    total = n - 1 if n - 1 == df + k else n
    for r in range(top - 3, top - MAX_GAP_ROWS, -1):
        for c in sorted(range(col - 3, col + 4), key=lambda c: abs(c - col)):
            if [grid.get((r + i, c)) for i in range(3)] != [float(k), float(df), float(total)]:
                continue
            needed = [(r, c + 1), (r, c + 2), (r, c + 3), (r + 1, c + 1), (r + 1, c + 2)]
            if all(key in grid for key in needed) and (r + 2, c + 1) in grid:
                significance = grid.get((r, c + 4))
                return Anova(
                    r, c, k, df, grid[(r, c + 1)], grid[(r + 1, c + 1)], grid[(r + 2, c + 1)],
                    significance is not None and 0 <= significance <= 1,
                )  # fmt: skip
    return None


def edited_stats(grid: Grid, top: int, col: int, n: int) -> tuple[int, int] | None:
    """A statistics block whose numbers no longer agree, found by its observation count."""
    for r in range(top - 3, top - MAX_GAP_ROWS, -1):
        for c in sorted(range(col - 3, col + 4), key=lambda c: abs(c - col)):
            if grid.get((r + 4, c)) == float(n) and all((r + i, c) in grid for i in range(4)):
                return r, c
    return None


def anova_r2(anova: Anova) -> float:
    return anova.ss_regression / anova.ss_total if anova.ss_total > 0 else math.nan
