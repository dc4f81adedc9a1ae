"""Benchmark: finding the data of a pasted table on wide sheets. Prints a table, asserts nothing.

    python benchmarks/pasted_search.py                 # 50, 200 and 800 columns of 2,000 rows
    python benchmarks/pasted_search.py --columns 100 400 --rows 5000

Each size is a workbook held in memory: a data sheet of ``columns`` × ``rows`` random numbers
(the sheet the search must scan) with the table's true y and x hidden in two of its middle
columns, and a sheet with one pasted table (numbers from statsmodels) of n = 40 rows taken from
rows 700-739. Three tables are timed per size:

* full: statistics block, analysis of variance and coefficients (the SST and Sxx filters apply);
* coefficients only: no SST or MSE, so only the SE(b0)/SE(b1) filter on x narrows the search;
* no source: the table's data are not in the workbook, so the whole search runs and fails.

Columns: recognition (finding the tables), index (the numeric runs of every sheet, built once),
and the search for each table; the ratio is the search time per million windows of length n.

Measured (2 shared cores, seconds, one run each; 3 Dec 2026):

    columns  rows  windows  recognise  index  full  coef only  no source
         50  2000   120050      0.116  0.100  0.109     0.072      0.043
        200  2000   714200      0.655  0.457  0.229     0.415      0.189
        800  2000  3090800      0.952  0.972  0.425     1.255      0.379

Before the numpy anchors and dense runs, 800 columns took 3.4 s to recognise and 9.9 s to
index; before the bisection on y means, the coefficients-only search took 11 s. At 800
columns the window limit (2,000,000) is reached: the search says so in its "searched" note.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from functools import partial
from pathlib import Path
from typing import TypeVar

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from auditor.locate.pasted_record import PastedTable  # noqa: E402
from auditor.locate.pasted_source import DataIndex, find_source  # noqa: E402
from auditor.locate.pasted_tables import find_tables  # noqa: E402
from auditor.read.open import read_workbook  # noqa: E402
from auditor.read.workbook import Cell, Sheet, Workbook  # noqa: E402
from fixtures.pasted_layouts import Data, Scene, Table, write_scene  # noqa: E402

N = 40
T = TypeVar("T")
FIRST = 700


def _tables(rng: np.random.Generator, folder: Path) -> tuple[Workbook, np.ndarray]:
    x = rng.uniform(0, 100, N)
    y = 2.0 + 0.7 * x + rng.normal(0, 5, N)
    other = rng.uniform(0, 100, (N, 2))
    gone = 1.0 + 0.2 * other[:, 0] + rng.normal(0, 3, N)
    hidden = Data("Hidden", 0, 0, ["y", "x"], np.column_stack([y, x]))
    lost = Data("Lost", 0, 0, ["y", "x"], np.column_stack([gone, other[:, 0]]))
    path = folder / "tables.xlsx"
    write_scene(Scene([], [Table("Full", 0, 0, hidden), Table("Lost", 0, 0, lost)]), path)
    return read_workbook(path), np.column_stack([y, x])


def _coefficients_only(table: PastedTable) -> PastedTable:
    keep = {k: c for k, c in table.cells.items() if k.endswith(("intercept", "slope"))}
    return PastedTable(
        table.sheet, table.k, table.intercept, table.df, table.n, table.coefficients,
        table.standard_errors, table.levels, keep, footprint=table.footprint,
        consistent=table.consistent,
    )  # fmt: skip


def _wide(workbook: Workbook, columns: int, rows: int, hidden: np.ndarray, seed: int) -> None:
    rng = np.random.default_rng(seed)
    values = rng.normal(50, 20, (rows, columns)).round(3)
    middle = columns // 2
    values[FIRST : FIRST + N, middle] = hidden[:, 0]
    values[FIRST : FIRST + N, middle + 1] = hidden[:, 1]
    sheet = Sheet("Wide", max_row=rows, max_col=columns)
    for c in range(columns):
        for r in range(rows):
            sheet.cells[(r + 1, c + 1)] = Cell("Wide", r + 1, c + 1, float(values[r, c]))
    workbook.sheets["Wide"] = sheet


def _timed(function: Callable[[], T], repeat: int) -> tuple[float, T]:
    times, result = [], function()
    for _ in range(repeat):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


def _measure(workbook: Workbook, repeat: int) -> str:
    recognise, tables = _timed(partial(find_tables, workbook), repeat)
    full, lost = sorted(tables, key=lambda t: t.sheet)
    index_time, index = _timed(partial(DataIndex.build, workbook, [full, lost]), repeat)
    windows = sum(max(0, len(run.values) - N + 1) for run in index.runs)
    timings, found = [], []
    for table in (full, _coefficients_only(full), lost):
        seconds, source = _timed(partial(find_source, workbook, table, index), repeat)
        timings.append(seconds)
        found.append(source.status + (f" {source.y.address}" if source.y else ""))
    per_million = max(timings) / (windows / 1e6) if windows else float("nan")
    return (
        f"{windows:>10} {recognise:>10.3f} {index_time:>8.3f} {timings[0]:>8.3f} "
        f"{timings[1]:>10.3f} {timings[2]:>10.3f} {per_million:>17.3f}  " + "; ".join(found)
    )


def main() -> None:
    parser = argparse.ArgumentParser(description="pasted-table data search on wide sheets")
    parser.add_argument("--columns", type=int, nargs="+", default=[50, 200, 800])
    parser.add_argument("--rows", type=int, default=2000)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    with tempfile.TemporaryDirectory() as folder:
        base, hidden = _tables(rng, Path(folder))
    print(
        f"{'columns':>7} {'rows':>6} {'windows':>10} {'recognise':>10} {'index':>8} "
        f"{'full':>8} {'coef only':>10} {'no source':>10} {'s per 1M windows':>17}  found"
    )
    for columns in args.columns:
        workbook = Workbook(base.path, base.sha256, dict(base.sheets), base.names, True)
        _wide(workbook, columns, args.rows, hidden, seed=columns)
        print(f"{columns:>7} {args.rows:>6} " + _measure(workbook, args.repeat))


if __name__ == "__main__":
    main()
