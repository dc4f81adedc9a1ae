"""Seeded grid workbooks for the binding tests: several regressions side by side on a results
sheet, in either orientation, written with XlsxWriter.

Invented scenario: a greenhouse trial logs watering (mL/day) against shoot growth (mm/week) for
several benches. Each bench's data sit in two columns of sheet ``Benches``; sheet ``Summary``
holds one regression per column (statistics in rows, labels in column A) or one per row
(statistics in columns, labels in row 1). Forms vary by bench (SLOPE family, INDEX(LINEST),
a slope built by hand as COVARIANCE.S/VAR.S with R² as CORREL(x, y)^2);
t is built from the slope and SE cells, p from the t and df cells.

Stored values are what a spreadsheet would save, computed here by numpy least squares and
scipy's t distribution (outside references, not regaudit): a recalculating engine gives the
same numbers to ~1e-13. The layout each workbook was given is returned as its answer key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xlsxwriter
from scipy import stats as sps
from xlsxwriter.utility import xl_rowcol_to_cell

STATS = ("slope", "intercept", "se_slope", "t_slope", "p_slope", "df", "r_squared")
LABELS = {
    "terse": ("Slope", "Intercept", "SE of slope", "t", "p-value", "df", "R²"),
    "verbose": (
        "Slope of the fitted line", "Intercept of the fitted line",
        "Standard error of the slope", "t statistic for the slope",
        "p-value (two-sided)", "Degrees of freedom", "Coefficient of determination",
    ),
}  # fmt: skip


@dataclass
class Bench:
    """One regression of a grid: its data and where its statistics went."""

    x: np.ndarray
    y: np.ndarray
    x_range: str = ""
    y_range: str = ""
    cells: dict[str, str] = field(default_factory=dict)  # statistic -> Summary!B3
    se_from_sd_y: bool = False  # the planted slip: SE built from the SD of y
    df_from: int | None = None  # the planted slip: p reads another bench's df cell
    typed_df: float | None = None  # the df cell holds this typed number, not =COUNT(x)-2


def spreadsheet_fit(x: np.ndarray, y: np.ndarray, se_from_sd_y: bool = False) -> dict[str, float]:
    """What SLOPE, INTERCEPT, STEYX/DEVSQ, RSQ and T.DIST.2T store (numpy lstsq and scipy)."""
    design = np.column_stack([x, np.ones_like(x)])
    (slope, intercept), *_ = np.linalg.lstsq(design, y, rcond=None)
    resid = y - design @ np.array([slope, intercept])
    n = len(x)
    sxx = float(((x - x.mean()) ** 2).sum())
    spread = float(np.std(y, ddof=1)) if se_from_sd_y else math.sqrt(float(resid @ resid) / (n - 2))
    se = spread / math.sqrt(sxx)
    t = float(slope) / se
    r2 = 1.0 - float(resid @ resid) / float(((y - y.mean()) ** 2).sum())
    p = float(2.0 * sps.t.sf(abs(t), n - 2))
    return {"slope": float(slope), "intercept": float(intercept), "se_slope": se,
            "t_slope": t, "p_slope": p, "df": float(n - 2), "r_squared": r2}  # fmt: skip


def benches(seed: int, count: int) -> list[Bench]:
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(count):
        n = int(rng.integers(7, 14))
        x = np.round(np.linspace(20.0, 180.0, n) + rng.normal(0, 2.0, n), 1)
        y = np.round(3.0 + float(rng.uniform(0.02, 0.09)) * x + rng.normal(0, 1.5, n), 2)
        out.append(Bench(x, y))
    return out


def _formula(stat: str, form: str, bench: Bench, cells: dict[str, str], df_cell: str) -> str:
    ys, xs = bench.y_range, bench.x_range
    lin = f"LINEST({ys},{xs},TRUE,TRUE)"
    if form == "hand" and stat in ("slope", "intercept", "r_squared"):
        return {
            "slope": f"=_xlfn.COVARIANCE.S({xs},{ys})/_xlfn.VAR.S({xs})",
            "intercept": f"=AVERAGE({ys})-{cells['slope']}*AVERAGE({xs})",
            "r_squared": f"=CORREL({xs},{ys})^2",
        }[stat]
    if stat == "slope":
        return f"=INDEX({lin},1,1)" if form == "index" else f"=SLOPE({ys},{xs})"
    if stat == "intercept":
        return f"=INDEX({lin},1,2)" if form == "index" else f"=INTERCEPT({ys},{xs})"
    if stat == "se_slope":
        if bench.se_from_sd_y:
            return f"=STDEV({ys})/SQRT(DEVSQ({xs}))"
        return f"=INDEX({lin},2,1)" if form == "index" else f"=STEYX({ys},{xs})/SQRT(DEVSQ({xs}))"
    if stat == "t_slope":
        return f"={cells['slope']}/{cells['se_slope']}"
    if stat == "p_slope":
        return f"=_xlfn.T.DIST.2T(ABS({cells['t_slope']}),{df_cell})"
    if stat == "df":
        return f"=COUNT({xs})-2"
    return f"=INDEX({lin},3,1)" if form == "index" else f"=RSQ({ys},{xs})"


def write_grid(
    path: Path,
    group: list[Bench],
    *,
    across: bool,
    seed: int,
    wording: str = "terse",
    names: str = "Bench {}",
    form: str | None = None,
) -> list[Bench]:
    """A workbook with ``group`` side by side on ``Summary``: one regression per column
    (``across=False``: statistics in rows, labels in column A) or one per row (``across=True``:
    statistics in columns, labels in row 1)."""
    rng = np.random.default_rng(seed)
    book = xlsxwriter.Workbook(str(path))
    data = book.add_worksheet("Benches")
    summary = book.add_worksheet("Summary")
    for i, bench in enumerate(group):
        col = 3 * i
        data.write(0, col, f"Watering bench {i + 1} (mL/day)")
        data.write(0, col + 1, f"Growth bench {i + 1} (mm/week)")
        for k, (xv, yv) in enumerate(zip(bench.x, bench.y, strict=True)):
            data.write_number(1 + k, col, float(xv))
            data.write_number(1 + k, col + 1, float(yv))
        last = len(bench.x)
        bench.x_range = f"Benches!{xl_rowcol_to_cell(1, col)}:{xl_rowcol_to_cell(last, col)}"
        bench.y_range = (
            f"Benches!{xl_rowcol_to_cell(1, col + 1)}:{xl_rowcol_to_cell(last, col + 1)}"
        )
    for k, label in enumerate(LABELS[wording]):
        summary.write(*((0, 1 + k) if across else (1 + k, 0)), label)
    places = {}
    for i, bench in enumerate(group):
        summary.write(*((1 + i, 0) if across else (0, 1 + i)), names.format(i + 1))
        places[i] = {
            stat: ((1 + i, 1 + k) if across else (1 + k, 1 + i)) for k, stat in enumerate(STATS)
        }
        bench.cells = {stat: "Summary!" + xl_rowcol_to_cell(*at) for stat, at in places[i].items()}
    for i, bench in enumerate(group):
        drawn = ("index", "slope", "hand")[int(rng.integers(3))]
        form_here = form or drawn
        local = {stat: cell.split("!")[1] for stat, cell in bench.cells.items()}
        source = group[bench.df_from] if bench.df_from is not None else bench
        df_cell = source.cells["df"].split("!")[1]
        shown = spreadsheet_fit(bench.x, bench.y, bench.se_from_sd_y)
        if bench.df_from is not None or bench.typed_df is not None:
            df = float(len(source.x) - 2) if bench.typed_df is None else bench.typed_df
            shown["p_slope"] = float(2.0 * sps.t.sf(abs(shown["t_slope"]), df))
            shown["df"] = df if bench.typed_df is not None else shown["df"]
        for stat in STATS:
            if stat == "df" and bench.typed_df is not None:
                summary.write_number(*places[i][stat], bench.typed_df)
                continue
            summary.write_formula(
                *places[i][stat],
                _formula(stat, form_here, bench, local, df_cell),
                None,
                shown[stat],
            )
    book.close()
    return group
