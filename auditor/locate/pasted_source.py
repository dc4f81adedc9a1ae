"""The data a pasted table came from, found by reproducing it.

A pasted table carries no reference to its data, so the data are found by what they must give:
a y and x column (or row) of the table's n values whose least-squares fit gives the table's
coefficients. Every numeric run of every sheet (columns and rows, the stored values of formula
cells included, so log-transformed columns count) is a candidate; the table's own cells are not.

The search is bounded and cheap on wide sheets:

* candidate windows of length n are indexed by run; their sums and centred sums of squares come
  from prefix sums, so each costs O(1);
* y must have the table's total sum of squares (SST, from the analysis of variance or from s, R²
  and n); with one x, x must have Sxx = MSE / SE(b₁)²; both are checked on every window first;
* a pair must satisfy the mean equation ȳ = b₀ + Σ bⱼ·x̄ⱼ before anything is fitted;
* only the few pairs left are fitted, and a pair is the source when the fit gives the table's
  coefficients and R² to 1e-7 relative (pasted numbers are full doubles).

When nothing reproduces the table, a near match (:mod:`auditor.locate.pasted_near`) makes it
"stale"; otherwise it has no source, and :class:`Source` says what was searched. The data index
and its windows are in :mod:`auditor.locate.pasted_data`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from auditor.fit.ols import fit_ols
from auditor.locate.pasted_data import (
    MAX_WINDOWS,
    PREFILTER_RELATIVE,
    DataIndex,
    PastedOrigin,
    Run,
    Source,
    Windows,
    block_ref,
    matching,
    windows_of,
)
from auditor.locate.pasted_near import near_match
from auditor.locate.pasted_record import PastedTable
from auditor.read.workbook import Workbook

__all__ = ["DataIndex", "PastedOrigin", "Source", "find_source"]

MAX_FITS = 2_000  # least-squares fits tried per table


REPRODUCE_RELATIVE = 1e-7  # pasted doubles: coefficients and R² reproduced to this


def find_source(workbook: Workbook, table: PastedTable, index: DataIndex) -> Source:
    """The data that reproduce ``table``; else a near match ("stale"); else none, and why."""
    n = table.n
    windows, seen = windows_of(index, n, table.intercept, _streaming_targets(table))
    searched = (
        f"searched every numeric column and row of {index.sheets} sheet(s) outside the tables "
        f"({len(index.runs)} long enough): {seen} runs of {n} consecutive values"
        + (f" (limit {MAX_WINDOWS:,} reached: later columns not searched)" if windows.cut else "")
    )
    y_rows = matching(windows, table.ss_total)
    fits = 0
    for y_at, x_block, runs in _pairs(index, windows, table, y_rows):
        if fits >= MAX_FITS:
            break
        fits += 1
        if _reproduces(table, x_block, runs[0].values[y_at : y_at + n]):
            x_ref = block_ref(runs[1:], n, x_block.offset)
            return Source("reproduced", x_ref, runs[0].ref(y_at, n), searched=searched)
    searched += f", {fits} fits tried; none gives the table's coefficients"
    return near_match(workbook, table, index, (windows, y_rows), searched)


def _streaming_targets(table: PastedTable) -> tuple[float, ...]:
    """With one x and both SST and MSE known, only windows with y's SST or x's Sxx can take
    part, so the rest need not be kept (and no window limit applies)."""
    se_slope = table.standard_errors[1] if len(table.standard_errors) > 1 else 0.0
    if table.k != 1 or table.ss_total is None or table.mse is None or se_slope <= 0:
        return ()
    if not all(table.consistent):
        return ()  # x cannot be filtered when a coefficient was edited: keep every window
    return (table.ss_total, table.mse / se_slope**2)


@dataclass
class _Block:
    offset: int
    values: np.ndarray  # (n, k)


def _pairs(
    index: DataIndex, windows: Windows, table: PastedTable, y_rows: np.ndarray
) -> list[tuple[int, _Block, list[Run]]]:
    """(y offset, x block, [y run, x runs…]) pairs passing the mean equation, nearest first."""
    n, k = table.n, table.k
    runs = index.runs
    x_rows = np.arange(len(windows.ss))
    if not all(table.consistent):
        pass  # an edited SE would mislead the filters on x
    elif k == 1 and table.mse is not None and table.standard_errors[1] > 0:
        x_rows = matching(windows, table.mse / table.standard_errors[1] ** 2)
    elif k == 1 and table.intercept and table.standard_errors[1] > 0:
        # Coefficients alone: SE(b0)² / SE(b1)² = Σx² / n, whatever the scatter.
        mean_square = (table.standard_errors[0] / table.standard_errors[1]) ** 2
        raw = Windows(
            windows.run, windows.offset, windows.mean,
            (windows.ss + n * windows.mean**2) / n, windows.scale / n,
        )  # fmt: skip
        x_rows = matching(raw, mean_square)
    # x windows by place (sheet, orientation, first row or column) and line, for blocks of k
    by_place: dict[tuple[str, bool, int], dict[int, int]] = {}
    for w in x_rows.tolist():
        run = runs[int(windows.run[w])]
        place = (run.sheet, run.by_rows, run.start + int(windows.offset[w]))
        by_place.setdefault(place, {})[run.line] = w
    blocks: list[list[int]] = []
    for lines in by_place.values():
        for first_line in sorted(lines):
            block = [lines.get(first_line + j, -1) for j in range(k)]
            if min(block) >= 0:
                blocks.append(block)
    if not blocks:
        return []
    members_array = np.array(blocks, dtype=int)  # (blocks, k)
    predicted = table.coefficients[0] + windows.mean[members_array] @ np.array(table.slopes)
    out: list[tuple[tuple[int, int], int, _Block, list[Run]]] = []
    for y, b in _mean_equation_pairs(windows, table, y_rows, members_array, predicted):
        chosen = blocks[b]
        y_run = runs[int(windows.run[y])]
        y_at = int(windows.offset[y])
        x_runs = [runs[int(windows.run[m])] for m in chosen]
        if any(r is y_run for r in x_runs):
            continue
        offset = int(windows.offset[chosen[0]])
        x_values = np.column_stack([r.values[offset : offset + n] for r in x_runs])
        place = (x_runs[0].sheet, x_runs[0].by_rows, x_runs[0].start + offset)
        aligned = place == (y_run.sheet, y_run.by_rows, y_run.start + y_at)
        rank = (0 if aligned else 1 if place[0] == y_run.sheet else 2, len(out))
        out.append((rank, y_at, _Block(offset, x_values), [y_run, *x_runs]))
    out.sort(key=lambda item: item[0])
    return [(y_at, block, found) for _, y_at, block, found in out]


def _mean_equation_pairs(
    windows: Windows,
    table: PastedTable,
    y_rows: np.ndarray,
    members: np.ndarray,
    predicted: np.ndarray,
) -> list[tuple[int, int]]:
    """(y window, x block) pairs with ȳ = b0 + Σ bⱼ·x̄ⱼ, found by binary search in the sorted y
    means (O(log W) per x block); with one x and no SST in the table, y must also have
    SST = SE(b1)²·Sxx·df + b1²·Sxx for that x."""
    n = table.n
    if not table.intercept or not all(table.consistent):
        # No mean equation through the origin, nor with an edited coefficient: the fit decides.
        every = [(int(y), b) for y in y_rows[:MAX_FITS].tolist() for b in range(len(members))]
        return every[:MAX_FITS]
    y_mean, y_ss = windows.mean[y_rows], windows.ss[y_rows]
    spread = np.sqrt(np.maximum(y_ss, 0.0) / n)
    order = np.argsort(y_mean, kind="stable")
    sorted_means = y_mean[order]
    widest = float(np.max(np.abs(y_mean) + spread)) if len(y_rows) else 0.0
    implied_sst = table.k == 1 and table.ss_total is None and table.standard_errors[1] > 0
    pairs: list[tuple[int, int]] = []
    for b in range(len(members)):
        reach = 1e-6 * (abs(predicted[b]) + widest) + 1e-300
        low = int(np.searchsorted(sorted_means, predicted[b] - reach, side="left"))
        high = int(np.searchsorted(sorted_means, predicted[b] + reach, side="right"))
        near = order[low:high]
        allowed = 1e-6 * (abs(predicted[b]) + np.abs(y_mean[near]) + spread[near]) + 1e-300
        near = near[np.abs(y_mean[near] - predicted[b]) <= allowed]
        if implied_sst and len(near):
            sxx = float(windows.ss[members[b, 0]])
            sst = sxx * (table.standard_errors[1] ** 2 * table.df + table.slopes[0] ** 2)
            scale = windows.scale[y_rows[near]]
            near = near[np.abs(y_ss[near] - sst) <= PREFILTER_RELATIVE * sst + 1e-12 * scale]
        pairs.extend((int(y), b) for y in y_rows[near][:MAX_FITS].tolist())
        if len(pairs) >= MAX_FITS:
            break
    return pairs[:MAX_FITS]


def _reproduces(table: PastedTable, x_block: _Block, y: np.ndarray) -> bool:
    fit = fit_ols(x_block.values, y, intercept=table.intercept)
    if fit.status not in ("ok", "perfect-fit"):
        return False
    found = [fit.intercept_value, *(float(s) for s in fit.slopes)]
    scale = max(abs(v) for v in table.coefficients)
    for mine, theirs, trusted in zip(found, table.coefficients, table.consistent, strict=True):
        if trusted and abs(mine - theirs) > REPRODUCE_RELATIVE * max(abs(theirs), 1e-9 * scale):
            return False
    if table.r_squared is not None and not math.isclose(
        fit.r_squared, table.r_squared, rel_tol=1e-6, abs_tol=1e-12
    ):
        return False
    # The scatter must match too: fitted values (a residual output or a prediction column moved
    # away from its table) give the same coefficients with standard errors of 0.
    errors = [fit.se_intercept or 0.0, *(float(s) for s in fit.se_slopes)]
    for mine, theirs, trusted in zip(errors, table.standard_errors, table.consistent, strict=True):
        if trusted and theirs > 0 and not math.isclose(mine, theirs, rel_tol=1e-6):
            return False
    return True
