"""The rows of a regression's used points, asked for by a point's place among the used points.

The design metrics name a handful of rows (the largest leverage, the largest share of Sxx, the
rows whose removal moves p the most); a list of every used point's row, made for that, costs a
pass over the points per regression. :class:`UsedRows` answers from the array of rows the
checks already share (:class:`auditor.context.PointRows`), one Python int at a time.
"""

from __future__ import annotations

from typing import Protocol

import numpy as np
from numpy.typing import NDArray


class Rows(Protocol):
    """What the design metrics ask of the used points' rows: how many, and the i-th."""

    def __len__(self) -> int: ...

    def __getitem__(self, index: int, /) -> int: ...


class UsedRows:
    """The rows of the used points, in their order, from an array (no list of Python ints)."""

    def __init__(self, rows: NDArray[np.int64]) -> None:
        self._rows = rows

    def __len__(self) -> int:
        return int(self._rows.size)

    def __getitem__(self, index: int, /) -> int:
        return int(self._rows[index])
