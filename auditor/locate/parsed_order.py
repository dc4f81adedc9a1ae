"""The parsed formulas in the workbook's order, to visit a few of them in that order.

Following a regression's dependents (:mod:`auditor.locate.formulas`) tries only the formulas
that read its statistics or its data, but in the order of all the parsed formulas (which
statistic is attached first depends on it). Walking every formula of the workbook for each
regression and round to meet those few cost more than trying them (37,000 formulas on the
real-world set); their positions, sorted, give the same visits.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

Key = tuple[str, int, int]  # a formula cell: (sheet, row, column)


class ParsedOrder:
    """Each parsed formula's position in the order of ``parsed`` (which is fixed once made)."""

    def __init__(self, parsed: Mapping[Key, object]) -> None:
        self.keys: list[Key] = list(parsed)
        self._position = {key: position for position, key in enumerate(self.keys)}

    def after(self, keys: Iterable[Key], position: int) -> list[int]:
        """The positions of those of ``keys`` that are parsed formulas, past ``position``,
        ascending (``position`` -1: all of them)."""
        get = self._position.get
        return sorted(p for p in map(get, keys) if p is not None and p > position)
