"""The benchmark corpus: deterministic workbooks of the sizes the issue names.

Every workbook is a calibration-style table (x in column A, y in column B, a title and a header
row) and a block of statistic formulas beside it (SLOPE, INTERCEPT, STEYX, RSQ, SE of the slope,
t, df, p). The formulas carry stored values computed here with numpy and scipy, as a spreadsheet
application would have saved them, so the audit sees a real, confirmed regression rather than a
script-written file without values. Data come from fixed seeds; the same sizes give the same
bytes apart from the zip timestamps, which XlsxWriter fixes when ``constant_memory`` is used.

The scenario (invented): the Harrowgate water board's turbidity sensors, logged against a
reference meter.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import xlsxwriter
from scipy import stats

STAT_LABELS = ("Slope", "Intercept", "s(y.x)", "R squared", "SE of slope", "t", "df", "p-value")


@dataclass(frozen=True)
class Shape:
    """What one benchmark workbook looks like."""

    name: str
    sheets: int
    rows: int  # data rows per sheet (a title row and a header row come on top)
    seed: int


SMALL = Shape("rows_30", 1, 30, 11)
MEDIUM = Shape("sheets_10x500", 10, 500, 12)
LARGE = Shape("rows_200000", 1, 200_000, 13)
# 1,048,576 rows: the sheet's last row is the spreadsheet's last row.
HUGE = Shape("rows_1048576", 1, 1_048_576 - 2, 14)


def _statistics(x: np.ndarray, y: np.ndarray) -> list[float]:
    n = len(x)
    x_mean, y_mean = x.mean(), y.mean()
    sxx = float(((x - x_mean) ** 2).sum())
    slope = float(((x - x_mean) * (y - y_mean)).sum() / sxx)
    intercept = float(y_mean - slope * x_mean)
    residuals = y - (intercept + slope * x)
    steyx = float(np.sqrt((residuals**2).sum() / (n - 2)))
    r_squared = float(1 - (residuals**2).sum() / ((y - y_mean) ** 2).sum())
    se_slope = steyx / np.sqrt(sxx)
    t_value = slope / se_slope
    p_value = float(2 * stats.t.sf(abs(t_value), n - 2))
    return [slope, intercept, steyx, r_squared, float(se_slope), float(t_value), n - 2, p_value]


def _formulas(last: int) -> list[str]:
    x, y = f"A3:A{last}", f"B3:B{last}"
    return [
        f"=SLOPE({y},{x})",
        f"=INTERCEPT({y},{x})",
        f"=STEYX({y},{x})",
        f"=RSQ({y},{x})",
        f"=E3/SQRT(DEVSQ({x}))",
        "=E1/E5",
        f"=COUNT({x})-2",
        "=_xlfn.T.DIST.2T(ABS(E6),E7)",
    ]


def _write_sheet(
    book: xlsxwriter.Workbook, title: str, rows: int, rng: np.random.Generator
) -> None:
    sheet = book.add_worksheet(title)
    x = np.round(rng.uniform(0.5, 40.0, rows), 3)
    y = np.round(0.12 + 0.0485 * x + rng.normal(0.0, 0.02, rows), 4)
    last = rows + 2
    values = _statistics(x, y)
    # constant_memory mode writes row by row (a row is flushed once a later row is written), so
    # each row is written whole and in order: the statistic block sits in D1:E8.
    formulas = _formulas(last)
    for row in range(last):
        if row == 0:
            sheet.write_string(0, 0, f"Turbidity sensor {title}: reference (NTU) vs reading")
        elif row == 1:
            sheet.write_string(1, 0, "Reference NTU")
            sheet.write_string(1, 1, "Sensor NTU")
        else:
            sheet.write_number(row, 0, float(x[row - 2]))
            sheet.write_number(row, 1, float(y[row - 2]))
        if row < len(STAT_LABELS):
            sheet.write_string(row, 3, STAT_LABELS[row])
            sheet.write_formula(row, 4, formulas[row], None, values[row])


def write_workbook(shape: Shape, path: Path) -> Path:
    """Write ``shape`` to ``path`` (atomically: a temporary file, then a rename)."""
    rng = np.random.default_rng(shape.seed)
    temporary = path.with_name(path.name + ".part")
    book = xlsxwriter.Workbook(str(temporary), {"constant_memory": True})
    for index in range(shape.sheets):
        _write_sheet(book, f"Sensor {index + 1}", shape.rows, rng)
    book.close()
    temporary.replace(path)
    return path


def ensure(shape: Shape, folder: Path) -> Path:
    """The workbook for ``shape`` in ``folder``, written if it is not there yet."""
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{shape.name}.xlsx"
    return path if path.is_file() else write_workbook(shape, path)


def ensure_sheets(count: int, folder: Path) -> list[Path]:
    """``count`` workbooks of 10 sheets × 500 rows (the issue's batch of 20), seeds 100 on."""
    folder.mkdir(parents=True, exist_ok=True)
    return [
        ensure(Shape(f"sheets_10x500_{index:02d}", 10, 500, 100 + index), folder)
        for index in range(count)
    ]


def ensure_many(count: int, folder: Path) -> list[Path]:
    """``count`` small workbooks (30 to 400 rows, one to three sheets) for throughput runs."""
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for index in range(count):
        rows = 30 + (index * 37) % 371
        shape = Shape(f"batch_{index:04d}", 1 + index % 3, rows, 1000 + index)
        paths.append(ensure(shape, folder))
    return paths
