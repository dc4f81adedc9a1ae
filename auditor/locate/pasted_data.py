"""The numeric data of a workbook as the pasted-table search sees them, and what it finds.

Every numeric run of every sheet (columns and rows; the stored values of formula cells included,
so log-transformed columns count; the tables' own cells left out) is indexed once per workbook.
For a table of n observations, every window of n consecutive values of a run gets its mean and
sum of squares from prefix sums (O(1) each, on values centred by the run's mean so that fewer
digits cancel).
"""

from __future__ import annotations

import math
from array import array
from dataclasses import dataclass, field
from itertools import compress

import numpy as np

from auditor.formula.syntax import Ref
from auditor.locate.pasted_numbers import entries
from auditor.locate.pasted_record import PastedTable
from auditor.read.workbook import Workbook

MIN_RUN = 3
MAX_WINDOWS = 2_000_000  # windows of one length considered per table (bounds the search)


PREFILTER_RELATIVE = 1e-5  # sums of squares from prefix sums: loose, the fit decides


@dataclass
class Run:
    """Consecutive numeric cells of one column (``by_rows`` False) or one row of a sheet."""

    sheet: str
    by_rows: bool
    line: int  # the column (or row) number
    start: int  # first row (or column)
    values: np.ndarray

    def ref(self, offset: int, n: int) -> Ref:
        first = self.start + offset
        if self.by_rows:
            return Ref(self.sheet, self.line, first, self.line, first + n - 1)
        return Ref(self.sheet, first, self.line, first + n - 1, self.line)

    def header(self, workbook: Workbook, offset: int) -> str:
        """The text just before the window (above a column, left of a row)."""
        first = self.start + offset - 1
        cell = (
            workbook.cell(self.sheet, self.line, first)
            if self.by_rows
            else workbook.cell(self.sheet, first, self.line)
        )
        return cell.value.strip() if cell is not None and isinstance(cell.value, str) else ""


@dataclass
class Source:
    status: str  # "reproduced" | "stale" | "none"
    x: Ref | None = None
    y: Ref | None = None
    evidence: str = ""
    searched: str = ""


@dataclass
class PastedOrigin:
    """What a regression found from a pasted table carries besides its ranges."""

    table: PastedTable
    source: Source


@dataclass
class DataIndex:
    """Every numeric run of the workbook outside the pasted tables, built once."""

    runs: list[Run] = field(default_factory=list)
    sheets: int = 0

    @classmethod
    def build(cls, workbook: Workbook, tables: list[PastedTable]) -> DataIndex:
        taken: dict[str, set[tuple[int, int]]] = {}
        for table in tables:
            taken.setdefault(table.sheet, set()).update(table.footprint)
        index = cls(sheets=len(workbook.sheets))
        for sheet in workbook.sheets.values():
            # Three arrays, not a dict of every number (a million-row sheet: 16 bytes a number).
            rows, cols, values = entries(sheet, formulas=True)
            skip = taken.get(sheet.name, set())
            if skip:
                kept = [(r, c) not in skip for r, c in zip(rows, cols, strict=True)]
                rows, cols = array("q", compress(rows, kept)), array("q", compress(cols, kept))
                values = array("d", compress(values, kept))
            shortest = min((t.n for t in tables), default=MIN_RUN)
            found = _dense_runs(sheet.name, rows, cols, values, max(MIN_RUN, shortest))
            index.runs.extend(found)
        return index


MAX_DENSE_CELLS = 20_000_000


def _dense_runs(
    sheet: str, row_list: array[int], col_list: array[int], values: array[float], shortest: int
) -> list[Run]:
    """The runs of at least ``shortest`` numbers down every column and along every row, found
    on a dense copy of the sheet with numpy (a sparse sheet of huge extent goes cell by cell)."""
    if not row_list:
        return []
    rows = np.frombuffer(row_list, dtype=np.int64)
    cols = np.frombuffer(col_list, dtype=np.int64)
    top, left = int(rows.min()), int(cols.min())
    height, width = int(rows.max()) - top + 1, int(cols.max()) - left + 1
    if height * width > MAX_DENSE_CELLS:
        numbers = dict(zip(zip(row_list, col_list, strict=True), values, strict=True))
        found = _runs(sheet, numbers, by_rows=False) + _runs(sheet, numbers, by_rows=True)
        return [run for run in found if len(run.values) >= shortest]
    dense = np.full((height, width), np.nan)
    dense[rows - top, cols - left] = np.frombuffer(values, dtype=np.float64)
    runs: list[Run] = []
    for by_rows, matrix in ((False, dense.T), (True, dense)):
        present = np.isfinite(matrix)
        padded = np.zeros((matrix.shape[0], matrix.shape[1] + 2), dtype=np.int8)
        padded[:, 1:-1] = present
        line_at, edge_at = np.nonzero(np.diff(padded, axis=1))  # starts and ends alternate
        for line, start, end in zip(
            line_at[::2].tolist(), edge_at[::2].tolist(), edge_at[1::2].tolist(), strict=True
        ):
            if end - start >= shortest:
                first = (left if by_rows else top) + start
                number = (top if by_rows else left) + line
                runs.append(Run(sheet, by_rows, number, first, matrix[line, start:end].copy()))
    return runs


def _runs(sheet: str, numbers: dict[tuple[int, int], float], by_rows: bool) -> list[Run]:
    lines: dict[int, list[int]] = {}
    for r, c in numbers:
        line, pos = (r, c) if by_rows else (c, r)
        lines.setdefault(line, []).append(pos)
    runs = []
    for line, positions in lines.items():
        positions.sort()
        begin = 0
        for i in range(1, len(positions) + 1):
            if i == len(positions) or positions[i] != positions[i - 1] + 1:
                if i - begin >= MIN_RUN:
                    first = positions[begin]
                    keys = [((line, p) if by_rows else (p, line)) for p in positions[begin:i]]
                    runs.append(
                        Run(sheet, by_rows, line, first, np.array([numbers[k] for k in keys]))
                    )
                begin = i
    return runs


@dataclass
class Windows:
    """All windows of length n: which run, where, their mean and sum of squares."""

    run: np.ndarray  # index into DataIndex.runs
    offset: np.ndarray
    mean: np.ndarray
    ss: np.ndarray  # centred, or raw Σv² for a fit through the origin
    scale: np.ndarray  # Σv² of the window, for the cancellation allowance
    cut: bool = False  # the window limit was reached: later runs were not searched


def windows_of(
    index: DataIndex, n: int, centred: bool, targets: tuple[float, ...] = ()
) -> tuple[Windows, int]:
    """Every window of n values, or with ``targets`` (sums of squares y or x must have) only the
    windows near one of them, kept as they stream past (then no limit applies). Returns the
    windows kept and how many were seen."""
    parts: list[tuple[np.ndarray, ...]] = []
    total, cut = 0, False
    for number, run in enumerate(index.runs):
        count = len(run.values) - n + 1
        if count <= 0:
            continue
        total += count
        if total > MAX_WINDOWS and not targets:
            cut = True
            break
        shift = float(np.mean(run.values))
        centre = run.values - shift  # prefix sums of centred values lose fewer digits
        s1 = np.concatenate(([0.0], np.cumsum(centre)))
        s2 = np.concatenate(([0.0], np.cumsum(centre * centre)))
        sums = s1[n:] - s1[:-n]
        squares = s2[n:] - s2[:-n]
        mean = shift + sums / n
        if centred:
            ss = squares - sums * sums / n
        else:
            ss = squares + 2.0 * shift * sums + n * shift * shift
        scale = squares + np.abs(shift) * (np.abs(sums) + n * abs(shift))
        kept = np.arange(count)
        if targets:
            near = np.zeros(count, dtype=bool)
            for target in targets:
                near |= np.abs(ss - target) <= PREFILTER_RELATIVE * abs(target) + 1e-12 * scale
            kept = np.nonzero(near)[0]
        parts.append((np.full(len(kept), number), kept, mean[kept], ss[kept], scale[kept]))
    if not parts:
        empty = np.empty(0)
        return Windows(empty.astype(int), empty.astype(int), empty, empty, empty), total
    columns = [np.concatenate(column) for column in zip(*parts, strict=True)]
    numbers, offsets, means, squares_left, scales = columns
    kept_windows = Windows(
        numbers.astype(int), offsets.astype(int), means, squares_left, scales, cut
    )
    return kept_windows, min(total, MAX_WINDOWS) if cut else total


def matching(windows: Windows, target: float | None) -> np.ndarray:
    if target is None or not math.isfinite(target):
        return np.arange(len(windows.ss))
    allowed = PREFILTER_RELATIVE * abs(target) + 1e-12 * windows.scale
    return np.nonzero(np.abs(windows.ss - target) <= allowed)[0]


def block_ref(runs: list[Run], n: int, offset: int) -> Ref:
    first = runs[0]
    start = first.start + offset
    last = runs[-1].line
    if first.by_rows:
        return Ref(first.sheet, first.line, start, last, start + n - 1)
    return Ref(first.sheet, start, first.line, start + n - 1, last)
