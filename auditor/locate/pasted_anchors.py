"""Where pasted-table parts may start: their identities tested loosely on a dense sheet copy."""

from __future__ import annotations

import numpy as np

from auditor.locate.pasted_numbers import NumberGrid
from auditor.locate.pasted_parts import Grid

MAX_DENSE_CELLS = 20_000_000  # above this bounding box, every cell is tried one by one
BAND_ROWS = 1 << 16  # rows of a NumberGrid's dense copy tested at once (bounds the temporaries)
_AHEAD = 4  # rows below a place that its identities read (a statistics block's n)

Places = list[tuple[int, int]]


def anchors(grid: Grid) -> tuple[Places, Places, Places]:
    """Cells where a coefficient row, an analysis of variance or a statistics block may start:
    the identities tested on the whole sheet at once (numpy), loosely; each anchor is then
    verified exactly. Keeps recognition O(cells) in C on sheets of data. A :class:`NumberGrid`
    is tested a band of rows at a time, each band with the rows its identities read below it:
    the same places, in the same row-major order, without the whole sheet's temporaries."""
    if isinstance(grid, NumberGrid):
        if grid.height * grid.width > MAX_DENSE_CELLS:
            keys = list(grid)
            return keys, keys, keys
        found: tuple[Places, Places, Places] = ([], [], [])
        for first in range(0, grid.height, BAND_ROWS):
            stop = min(first + BAND_ROWS, grid.height)
            dense = grid.band(first, min(stop + _AHEAD, grid.height))
            for kept, mask in zip(found, _masks(dense), strict=True):
                kept.extend(_places(mask[: stop - first], grid.top + first, grid.left))
        return found
    keys = list(grid)
    rows = np.fromiter((k[0] for k in keys), dtype=np.int64, count=len(keys))
    cols = np.fromiter((k[1] for k in keys), dtype=np.int64, count=len(keys))
    top, left = int(rows.min()), int(cols.min())
    height, width = int(rows.max()) - top + 6, int(cols.max()) - left + 6
    if height * width > MAX_DENSE_CELLS:
        return keys, keys, keys
    dense = np.full((height, width), np.nan)
    dense[rows - top, cols - left] = np.fromiter(grid.values(), dtype=float, count=len(keys))
    coefficient, anova, stats = _masks(dense)
    return _places(coefficient, top, left), _places(anova, top, left), _places(stats, top, left)


def _masks(dense: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Where each part's identities hold loosely, indexed like ``dense`` (NaN: no number)."""
    loose = 1e-5
    with np.errstate(invalid="ignore", over="ignore"):
        b, se, t, p = dense[:, :-3], dense[:, 1:-2], dense[:, 2:-1], dense[:, 3:]
        coefficient = (se > 0) & (p >= 0) & (p <= 1) & (np.abs(t * se - b) <= loose * np.abs(b))
        d1, d2, d3 = dense[:-2], dense[1:-1], dense[2:]
        anova = (
            (d1 >= 1) & (d2 >= 1) & (d1 == np.round(d1)) & (d2 == np.round(d2)) & (d1 + d2 == d3)
        )
        r, r2, n = dense[:-4], dense[1:-3], dense[4:]
        stats = (r >= 0) & (r2 >= 0) & (r2 <= 1) & (n >= 3) & (n == np.round(n))
        stats &= np.abs(r * r - r2) <= loose * r2 + 1e-15
    return coefficient, anova, stats


def _places(mask: np.ndarray, top: int, left: int) -> Places:
    found_r, found_c = np.nonzero(mask)
    return list(zip((found_r + top).tolist(), (found_c + left).tolist(), strict=True))
