"""The values a chart caches beside each series reference, read when first asked for.

A chart part holds, for every series axis, the points the application drew last time
(``c:numCache``/``c:strCache`` under a reference, ``c:numLit``/``c:strLit`` alone). The audit
reads them only for series that carry a trendline (when the cells cannot be read, and to
describe points the fit leaves out); most series have none, and one real workbook's charts held
100,000 points. :class:`CachedPoints` keeps the cache's element and reads the points the first
time anything asks (length, an index, a slice, iteration, comparison), then drops the element.
It reads, compares and hashes as the tuple of points it stands for.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from typing import Any, overload

CHART_NS = "{http://schemas.openxmlformats.org/drawingml/2006/chart}"
_POINT, _VALUE, _COUNT = f"{CHART_NS}pt", f"{CHART_NS}v", f"{CHART_NS}ptCount"
MAX_POINTS = 1_048_576  # never more points than a sheet has rows

Point = float | str | None


class CachedPoints(Sequence[Point]):
    """The points of one cache element (None: no cache), by index; see the module's docstring."""

    __slots__ = ("_source", "_points")

    def __init__(self, source: Any) -> None:
        self._source = source
        self._points: tuple[Point, ...] | None = None if source is not None else ()

    @property
    def points(self) -> tuple[Point, ...]:
        """The points as a tuple (read from the element the first time)."""
        if self._points is None:
            self._points = read_points(self._source)
            self._source = None
        return self._points

    def __len__(self) -> int:
        return len(self.points)

    @overload
    def __getitem__(self, index: int) -> Point: ...

    @overload
    def __getitem__(self, index: slice) -> tuple[Point, ...]: ...

    def __getitem__(self, index: int | slice) -> Point | tuple[Point, ...]:
        return self.points[index]

    def __iter__(self) -> Iterator[Point]:
        return iter(self.points)

    def __eq__(self, other: object) -> bool:
        if isinstance(other, CachedPoints):
            return self.points == other.points
        if isinstance(other, tuple):
            return self.points == other
        return NotImplemented

    def __hash__(self) -> int:
        return hash(self.points)

    def __repr__(self) -> str:
        return repr(self.points)

    def __reduce__(self) -> tuple[Any, ...]:
        return (_from_points, (self.points,))


def _from_points(points: tuple[Point, ...]) -> CachedPoints:
    cached = CachedPoints(None)
    cached._points = points
    return cached


def read_points(cache: Any) -> tuple[Point, ...]:
    """Cached points by index (``c:ptCount`` long); a point the cache leaves out is None."""
    if cache is None:
        return ()
    count_element = cache.find(_COUNT)
    count = _int_attr(None if count_element is None else count_element.get("val")) or 0
    points: dict[int, float | str] = {}
    # Children taken by position rather than found by path (the <c:v> is nearly always a
    # point's first child): a chart of thousands of points is read several times faster.
    for point in cache.iterchildren(_POINT):
        value_element = point[0] if len(point) else None
        if value_element is None or value_element.tag != _VALUE:
            value_element = point.find(_VALUE)
        if value_element is None or value_element.text is None:
            continue
        index_text = point.get("idx")
        try:
            index = int(index_text) if index_text is not None else None
        except ValueError:
            continue
        if index is None:
            continue
        try:
            points[index] = float(value_element.text)
        except ValueError:
            points[index] = value_element.text
    count = max([count, *(i + 1 for i in points)]) if points else count
    count = min(count, MAX_POINTS)
    return tuple(map(points.get, range(count)))


def _int_attr(text: str | None) -> int | None:
    try:
        return int(text) if text is not None else None
    except ValueError:
        return None
