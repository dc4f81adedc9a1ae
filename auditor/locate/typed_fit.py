"""The arithmetic that ties a typed statistic table to data: fits of every window of a pair of
columns (or rows) at once, agreement at the digits the table shows, and the one changed reading
that would reproduce a table the data no longer give.

A line's figures come from five sums (n, Σx, Σy, Σx², Σxy, Σy² over centred values), so the fit
of every window of n consecutive rows costs O(1) from prefix sums. When y changes by δ in row i
alone, the slope moves by δ·(xᵢ − x̄)/Sxx and the intercept by δ·(1/n − x̄·(xᵢ − x̄)/Sxx): each
typed figure gives an interval of δ, and a row whose intervals meet (and whose refit gives the
other figures too) is the one reading that changed since the table was typed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from auditor.fit.distributions import t_sf
from auditor.locate.typed_record import TypedTable, interval

# What detection allows beyond the digits shown: the sums lose a few digits of a full double.
DETECT_RELATIVE = 1e-7
GRID = 257  # changes of the one reading tried across the interval the slope and intercept allow
ZOOMS = 4  # finer grids around the nearest change
COMPARED = ("slope", "intercept", "se_slope", "se_intercept", "t_slope", "r_squared", "residual_sd")


@dataclass(frozen=True)
class Refit:
    """One changed reading that reproduces the table: y at ``index`` was ``typed_from``."""

    index: int  # position in the data window
    now: float  # the reading as the data hold it
    then: float  # the reading that reproduces every typed figure
    agreeing: tuple[str, ...]  # the figures it reproduces


def window_stats(x: np.ndarray, y: np.ndarray, n: int) -> dict[str, np.ndarray]:
    """The line's figures over every window of n consecutive pairs (arrays of length L − n + 1)."""
    xc, yc = x - x.mean(), y - y.mean()

    def sums(values: np.ndarray) -> np.ndarray:
        total = np.concatenate(([0.0], np.cumsum(values)))
        return np.asarray(total[n:] - total[:-n], dtype=float)

    sx, sy = sums(xc), sums(yc)
    sxx = sums(xc * xc) - sx * sx / n
    syy = sums(yc * yc) - sy * sy / n
    sxy = sums(xc * yc) - sx * sy / n
    with np.errstate(divide="ignore", invalid="ignore"):
        slope = sxy / sxx
        intercept = (y.mean() + sy / n) - slope * (x.mean() + sx / n)
        sse = np.maximum(syy - slope * sxy, 0.0)
        residual_sd = np.sqrt(sse / (n - 2)) if n > 2 else np.full_like(sxx, np.nan)
        se = residual_sd / np.sqrt(sxx)
        x_mean = x.mean() + sx / n
        return {
            "slope": slope,
            "intercept": intercept,
            "se_slope": se,
            "se_intercept": residual_sd * np.sqrt(1.0 / n + x_mean * x_mean / sxx),
            "t_slope": slope / se,
            "r_squared": sxy * sxy / (sxx * syy),
            "residual_sd": residual_sd,
        }


def agrees(table: TypedTable, stats: dict[str, np.ndarray], n: int) -> np.ndarray:
    """Which windows give every typed figure the table holds (at its digits, loosely)."""
    ok = np.ones(len(stats["slope"]), dtype=bool)
    for role in COMPARED:
        cell = table.cells.get(role)
        if cell is None:
            continue
        low, high = interval(cell)
        slack = DETECT_RELATIVE * abs(float(cell.value))  # type: ignore[arg-type]
        ok &= (stats[role] >= low - slack) & (stats[role] <= high + slack)
    if "p_slope" in table.cells and ok.any():
        ok &= _p_agrees(table, stats["t_slope"], n - 2)
    return ok


def _p_agrees(table: TypedTable, t: np.ndarray, df: int) -> np.ndarray:
    low, high = interval(table.cells["p_slope"])
    p = 2.0 * np.asarray(t_sf(np.abs(t), df), dtype=float)
    return (p >= low * (1 - DETECT_RELATIVE)) & (p <= high * (1 + DETECT_RELATIVE))


def shifted_stats(
    x: np.ndarray, y: np.ndarray, i: int, deltas: np.ndarray
) -> dict[str, np.ndarray]:
    """The line's figures when y[i] moves by each of ``deltas`` (closed form: ȳ moves by δ/n,
    Sxy by δ·(xᵢ − x̄), Syy by 2δ·(yᵢ − ȳ) + δ²·(1 − 1/n))."""
    n = len(x)
    xc, yc = x - x.mean(), y - y.mean()
    sxx = float(xc @ xc)
    sxy = float(xc @ yc) + deltas * xc[i]
    syy = float(yc @ yc) + 2.0 * deltas * yc[i] + deltas * deltas * (1.0 - 1.0 / n)
    slope = sxy / sxx
    intercept = y.mean() + deltas / n - slope * x.mean()
    residual_sd = np.sqrt(np.maximum(syy - slope * sxy, 0.0) / (n - 2))
    se = residual_sd / np.sqrt(sxx)
    with np.errstate(divide="ignore", invalid="ignore"):
        return {
            "slope": slope,
            "intercept": intercept,
            "se_slope": se,
            "se_intercept": residual_sd * np.sqrt(1.0 / n + x.mean() ** 2 / sxx),
            "t_slope": slope / se,
            "r_squared": sxy * sxy / (sxx * syy),
            "residual_sd": residual_sd,
        }


def single_reading(table: TypedTable, x: np.ndarray, y: np.ndarray) -> list[Refit]:
    """The rows whose y, changed alone, makes the data give every typed figure."""
    n = len(x)
    if n < 4 or "slope" not in table.cells:
        return []
    centred = x - x.mean()
    sxx = float(centred @ centred)
    if not sxx > 0:
        return []
    moves = {"slope": centred / sxx, "intercept": 1.0 / n - x.mean() * centred / sxx}
    found: list[Refit] = []
    base = window_stats(x, y, n)
    for i in range(n):
        low, high = -np.inf, np.inf
        for role, move in moves.items():
            cell = table.cells.get(role)
            if cell is None or abs(move[i]) < 1e-12 * max(1.0, float(np.abs(move).max())):
                continue
            bounds = interval(cell)
            slack = DETECT_RELATIVE * abs(float(cell.value))  # type: ignore[arg-type]
            ends = sorted(
                ((bounds[0] - slack - base[role][0]) / move[i],
                 (bounds[1] + slack - base[role][0]) / move[i])
            )  # fmt: skip
            low, high = max(low, ends[0]), min(high, ends[1])
        if not (np.isfinite(low) and np.isfinite(high)) or low > high:
            continue
        delta = _zoom(table, x, y, i, (low, high))
        if delta is not None:
            agreeing = tuple(r for r in (*COMPARED, "p_slope") if r in table.cells)
            found.append(Refit(i, float(y[i]), float(y[i] + delta), agreeing))
    return found


def _zoom(
    table: TypedTable, x: np.ndarray, y: np.ndarray, i: int, bounds: tuple[float, float]
) -> float | None:
    """A change of y[i] within ``bounds`` that gives every typed figure: a grid, then finer
    grids around the change that comes nearest (a figure shown to more digits than the slope
    allows only a narrow band of the interval)."""
    low, high = bounds
    for _ in range(ZOOMS):
        deltas = np.linspace(low, high, GRID)
        stats = shifted_stats(x, y, i, deltas)
        hits = np.nonzero(agrees(table, stats, len(x)))[0]
        if len(hits):
            return float(deltas[hits[len(hits) // 2]])
        nearest = int(np.argmin(_misfit(table, stats, len(x))))
        step = (high - low) / (GRID - 1)
        low = max(bounds[0], float(deltas[nearest]) - 2 * step)
        high = min(bounds[1], float(deltas[nearest]) + 2 * step)
    return None


def _misfit(table: TypedTable, stats: dict[str, np.ndarray], n: int) -> np.ndarray:
    """How far each change leaves the typed figures, in half units shown (1: at the edge); p
    too, which a small p shows more precisely than t."""
    values = dict(stats)
    if "p_slope" in table.cells:
        values["p_slope"] = 2.0 * np.asarray(t_sf(np.abs(stats["t_slope"]), n - 2), dtype=float)
    worst = np.zeros(len(stats["slope"]))
    for role in (*COMPARED, "p_slope"):
        cell = table.cells.get(role)
        if cell is not None:
            low, high = interval(cell)
            off = np.abs(values[role] - 0.5 * (low + high)) / (0.5 * (high - low))
            worst = np.maximum(worst, np.where(np.isfinite(off), off, np.inf))
    return worst
