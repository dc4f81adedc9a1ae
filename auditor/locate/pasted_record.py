"""PastedTable, the record of one pasted regression, and the placing of its cells by key."""

from __future__ import annotations

from dataclasses import dataclass, field

from auditor.locate.pasted_parts import (
    Anova,
    CoefficientRow,
    ResidualOutput,
    StatsBlock,
    anova_r2,
)
from auditor.read.workbook import Cell, Sheet


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


def cell_text(sheet: Sheet, r: int, c: int) -> str:
    value = sheet.value(r, c)
    return value.strip() if isinstance(value, str) else ""


def _cell(sheet: Sheet, r: int, c: int) -> Cell:
    found = sheet.get(r, c)
    return found if found is not None else Cell(sheet.name, r, c, None)


def put(table: PastedTable, sheet: Sheet, key: str, r: int, c: int) -> None:
    table.cells[key] = _cell(sheet, r, c)
    table.footprint.add((r, c))


def put_coefficient_cells(sheet: Sheet, table: PastedTable, run: list[CoefficientRow]) -> None:
    for index, row in enumerate(run):
        is_intercept = table.intercept and index == 0
        j = index if table.intercept else index + 1
        suffix = "" if table.k == 1 else f"[{j}]"
        what = "intercept" if is_intercept else "slope"
        names = [what, f"se_{what}", f"t_{what}", f"p_{what}"]
        for offset, name in enumerate(names):
            put(table, sheet, name + ("" if is_intercept else suffix), row.row, row.col + offset)
        for pair, level in enumerate(table.levels):
            tag = "" if pair == 0 else f"@{level * 100:g}%"
            base = "" if is_intercept else suffix
            c = row.col + 4 + 2 * pair
            put(table, sheet, f"ci_{what}_low{base}{tag}", row.row, c)
            put(table, sheet, f"ci_{what}_high{base}{tag}", row.row, c + 1)
        if not is_intercept:
            table.x_labels.append(cell_text(sheet, row.row, row.col - 1))
        table.footprint.add((row.row, row.col - 1))
    for c in range(run[0].col - 1, run[0].col + 4 + 2 * len(table.levels)):
        table.footprint.add((run[0].row - 1, c))


def put_anova_cells(sheet: Sheet, table: PastedTable, anova: Anova, trusted: bool = True) -> None:
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
        put(table, sheet, key, row, col)
    if not trusted:
        return  # an edited number would mislead the search: its cells are only compared
    table.ss_total, table.ss_residual = anova.ss_total, anova.ss_residual
    table.r_squared = anova_r2(anova)


def put_stats_cells(sheet: Sheet, table: PastedTable, block: StatsBlock) -> None:
    keys = ("multiple_r", "r_squared", "adj_r_squared", "residual_sd", "n")
    for offset, key in enumerate(keys):
        put(table, sheet, key, block.row + offset, block.col)
    table.r_squared = block.r_squared
    if table.ss_residual is None:
        table.ss_residual = block.residual_sd**2 * table.df
    if table.ss_total is None and block.r_squared < 1.0:
        table.ss_total = table.ss_residual / (1.0 - block.r_squared)
