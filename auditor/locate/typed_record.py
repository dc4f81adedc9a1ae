"""A typed statistic table as the search for its data sees it: its cells and words, and the
interval each typed figure stands for (the digits it shows)."""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from auditor.compare.precision import decimals_shown
from auditor.read.workbook import Cell

_BRACKETED = re.compile(r"[(\[]([^()\[\]]*)[)\]]")
ALLOWANCE = 1.01  # half a unit in the last place shown, and 1 % for the arithmetic


@dataclass
class TypedTable:
    """One typed statistic table: the value cell and label of each statistic, and its title."""

    sheet: str
    cells: dict[str, Cell]
    labels: dict[str, str]
    title: str = ""
    footprint: set[tuple[int, int]] = field(default_factory=set)
    claims: dict[str, Cell] = field(default_factory=dict)  # a p written as text: "<0.001"
    df_options: tuple[int, ...] = ()  # the degrees of freedom its numbers allow (n − 2)
    relations: list[str] = field(default_factory=list)  # what agreed, in words

    @property
    def anchor(self) -> Cell:
        return self.cells["slope"]

    def phrases(self) -> list[str]:
        """The table's own words: its title and what its labels say in brackets (the units of
        "Slope (NTU per L/s)"); the statistic words themselves name no data."""
        inside = [part for label in self.labels.values() for part in _BRACKETED.findall(label)]
        return [self.title, *inside]

    def words(self) -> str:
        return " ".join(self.phrases())


def half_unit(cell: Cell) -> float:
    """Half a unit in the last place the typed number shows (its digits or its format). A whole
    number's trailing zeros may be rounding (a t of 2139.7 shown to four digits is 2140): to
    link a table to its data they are not taken as digits."""
    value = float(cell.value)  # type: ignore[arg-type]
    decimals = decimals_shown(value, cell.number_format)
    if decimals == 0 and value.is_integer() and value != 0:
        whole = str(int(abs(value)))
        decimals = -(len(whole) - len(whole.rstrip("0")))
    return ALLOWANCE * (0.5 * 10.0 ** (-decimals) + 1e-12 * abs(value))


def interval(cell: Cell) -> tuple[float, float]:
    value, half = float(cell.value), half_unit(cell)  # type: ignore[arg-type]
    return value - half, value + half
