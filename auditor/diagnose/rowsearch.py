"""Row-subset search: the rows an author's ranges took in or left out, screened by running sums.

A reported number that no formula slip reproduces may be the right computation over the wrong
rows: ranges that stop short of the table, take in a total row, skip a number stored as text, or
a value pasted before one row changed. Each hypothesis in :data:`ROW_SUBSETS` proposes
:class:`Subset` rows together with their sums of centred cross products, so a candidate costs
O(1) whatever the table's length (:func:`moment_stat`); :func:`near_subsets` keeps the few that
come close, for the caller to confirm by an exact refit, because sums lose digits that a 1e-9
comparison needs. How each confirmed subset is put in words lives in :mod:`auditor.diagnose.rows`.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import NDArray

from auditor.compare.precision import Agreement
from auditor.diagnose.basis import two_sided

if TYPE_CHECKING:  # only annotations, as in auditor.diagnose.engine
    from auditor.extract.record import Extracted

Judge = Callable[[float], Agreement]
FloatArray = NDArray[np.float64]
BoolArray = NDArray[np.bool_]
MAX_END_DROP = 5  # rows dropped at each end of the table: ranges set before rows were added
# How extract.py words why a row was left out of, or parsed for, the intended table.
TOTAL_REASON, TEXT_REASON = "total or mean row", "number stored as text"
SCREEN_SLACK = 1e-6  # relative: how close a running-sum candidate must come to be refitted


@dataclass(frozen=True)
class RowTable:
    """The rows with numbers in x and y, in sheet order, and the running sums over them."""

    rows: list[int]
    x: FloatArray  # (m, k)
    y: FloatArray
    used: BoolArray  # in the intended table
    as_written: BoolArray
    total: BoolArray
    text: BoolArray  # a number stored as text, parsed for the intended table
    shift: FloatArray  # subtracted from [x..., y] before the sums: the intended means
    outer: FloatArray  # (m, p, p): z zᵀ per row, z = [1, x − shift, y − shift]
    running: FloatArray  # (n + 1, p, p): cumulative sums of ``outer`` over the intended rows
    intercept: bool

    def moments(self, mask: BoolArray) -> FloatArray:
        return np.asarray(self.outer[mask].sum(axis=0), dtype=np.float64)


def row_table(data: Extracted, intercept: bool) -> RowTable:
    k = data.x.shape[1]
    points = [p for p in data.points if p.y is not None and len(p.x) == k and None not in p.x]
    if sum(p.used for p in points) == data.n:
        rows = [p.row for p in points]
        x = np.array([p.x for p in points], dtype=np.float64).reshape(-1, k)
        y = np.array([p.y for p in points], dtype=np.float64)
        flags = [
            (p.used, p.used_as_written, TOTAL_REASON in p.reason, TEXT_REASON in p.reason)
            for p in points
        ]
    else:  # no row record (data built by hand): the intended rows, numbered from 1
        rows, x, y = list(range(1, data.n + 1)), data.x, data.y
        flags = [(True, True, False, False)] * data.n
    used, as_written, total, text = (
        np.array(f, dtype=bool).reshape(-1) for f in zip(*flags, strict=True)
    )
    # Centring on the intended means keeps the sums' cancellation small (design: fit.py).
    shift = np.zeros(k + 1)
    if intercept and data.n:
        shift = np.append(data.x.mean(axis=0), data.y.mean())
    z = np.column_stack([np.ones(len(rows)), x - shift[:k], y - shift[k]])
    outer = np.einsum("ni,nj->nij", z, z)
    running = np.concatenate([np.zeros((1, k + 2, k + 2)), np.cumsum(outer[used], axis=0)])
    return RowTable(rows, x, y, used, as_written, total, text, shift, outer, running, intercept)


@dataclass(frozen=True)
class Subset:
    source: str  # which hypothesis proposed it
    moments: FloatArray
    ends: tuple[int, int] = (0, 0)  # intended rows dropped at the start and at the end
    mask: BoolArray | None = None  # the rows chosen, when not given by ``ends`` or ``without``
    without: int | None = None  # the one intended row left out (built only when it matches)

    def chosen(self, table: RowTable) -> BoolArray:
        if self.mask is not None:
            return self.mask
        if self.without is not None:
            mask = table.used.copy()
            mask[self.without] = False
            return mask
        positions = np.flatnonzero(table.used)
        mask = np.zeros(len(table.rows), dtype=bool)
        mask[positions[self.ends[0] : len(positions) - self.ends[1]]] = True
        return mask


def rows_as_written(table: RowTable, stale: bool) -> list[Subset]:
    """The rows the author's SLOPE-family formulas see (short ranges, skipped text, totals)."""
    if not table.as_written.any() or (table.as_written == table.used).all():
        return []
    return [Subset("as-written", table.moments(table.as_written), mask=table.as_written)]


def rows_with_total(table: RowTable, stale: bool) -> list[Subset]:
    mask = table.used | table.total
    return [Subset("with-total", table.moments(mask), mask=mask)] if table.total.any() else []


def rows_without_text(table: RowTable, stale: bool) -> list[Subset]:
    mask = table.used & ~table.text
    return [Subset("without-text", table.moments(mask), mask=mask)] if table.text.any() else []


def rows_at_ends(table: RowTable, stale: bool) -> list[Subset]:
    """Up to MAX_END_DROP rows off each end, fewest first and the end before the start."""
    n, k = int(table.used.sum()), table.x.shape[1]
    out = []
    for dropped in range(1, 2 * MAX_END_DROP + 1):
        for at_end in range(min(dropped, MAX_END_DROP), -1, -1):
            at_start = dropped - at_end
            if at_start > MAX_END_DROP or n - dropped < k + 2 + int(table.intercept) - 1:
                continue
            moments = table.running[n - at_end] - table.running[at_start]
            out.append(Subset("ends", moments, ends=(at_start, at_end)))
    return out


def rows_one_out(table: RowTable, stale: bool) -> list[Subset]:
    """A pasted value from before one row was added or changed: the fit without that row."""
    if not stale:
        return []  # a live formula cannot skip one inner row of a contiguous range
    total = table.running[-1]
    return [
        Subset("one-row", total - table.outer[i], without=int(i))
        for i in np.flatnonzero(table.used)
    ]


# Most specific first: what the formulas actually see, then the commonest slips with rows.
ROW_SUBSETS: dict[str, Callable[[RowTable, bool], list[Subset]]] = {
    "rows-as-written": rows_as_written,
    "rows-with-total": rows_with_total,
    "rows-without-text": rows_without_text,
    "rows-at-ends": rows_at_ends,
    "rows-one-out": rows_one_out,
}


def moment_stat(moments: FloatArray, stat: str, j: int, table: RowTable) -> float:
    """One statistic of the fit over a subset, from its sums of cross products alone."""
    k, intercept = table.x.shape[1], table.intercept
    m = float(moments[0, 0])
    df = round(m) - k - int(intercept)
    if stat in ("n", "df"):
        return m if stat == "n" else float(df)
    if df <= 0:
        return math.nan
    mx = moments[0, 1 : k + 1] / m if intercept else np.zeros(k)
    my = float(moments[0, k + 1]) / m if intercept else 0.0
    sxx = moments[1 : k + 1, 1 : k + 1] - m * np.outer(mx, mx)
    sxy = moments[1 : k + 1, k + 1] - m * mx * my
    syy = float(moments[k + 1, k + 1]) - m * my * my
    singular = np.linalg.svd(sxx, compute_uv=False)
    if not singular[-1] > 1e-12 * singular[0]:
        return math.nan  # x constant (or collinear) over the subset: no slope to compare
    inverse = np.linalg.inv(sxx)
    b = inverse @ sxy
    s = math.sqrt(max(syy - float(b @ sxy), 0.0) / df)
    x_mean = mx + table.shift[:k]
    coefficient = {"slope": float(b[j])}
    coefficient["intercept"] = my + float(table.shift[k]) - float(b @ x_mean) if intercept else 0.0
    se = {"slope": s * math.sqrt(inverse[j, j])}
    if intercept:
        se["intercept"] = s * math.sqrt(1.0 / m + float(x_mean @ inverse @ x_mean))
    fam = "intercept" if stat.endswith("intercept") else "slope"
    simple = {
        "residual_sd": s,
        "r_squared": 1.0 - s * s * df / syy if syy > 0 else math.nan,
        fam: coefficient[fam],
    }
    if stat in simple:
        return simple[stat]
    if fam not in se:
        return math.nan
    t = coefficient[fam] / se[fam] if se[fam] > 0 else math.nan
    return {f"se_{fam}": se[fam], f"t_{fam}": t, f"p_{fam}": two_sided(t, df)}.get(stat, math.nan)


def near_subsets(
    table: RowTable, stat: str, j: int, reported: float, judge: Judge, stale: bool
) -> Iterator[BoolArray]:
    """The distinct rows, in :data:`ROW_SUBSETS` order, whose sums give ``stat`` close enough to
    ``reported`` to be worth an exact refit: within the judge's tolerance and SCREEN_SLACK."""
    seen: set[bytes] = set()
    for propose in ROW_SUBSETS.values():
        for subset in propose(table, stale):
            approx = moment_stat(subset.moments, stat, j, table)
            if not math.isfinite(approx):
                continue
            allowed = judge(approx).allowed or 0.0
            if abs(approx - reported) > allowed + SCREEN_SLACK * max(abs(reported), abs(approx)):
                continue
            mask = subset.chosen(table)
            if mask.tobytes() in seen:
                continue
            seen.add(mask.tobytes())
            yield mask
