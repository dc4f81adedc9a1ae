"""The two native charts of a detail sheet, drawn from the snapshot's columns.

With one x column: the data and the fitted line against x, and the residuals against x. With
several, x has no single axis, so both charts use the fitted value instead (observed against fitted,
with the line of equality, and residuals against fitted). Points the author's formula did not see
are a separate series with their own marker, so they stand out in grey print as well.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from xlsxwriter import Workbook
from xlsxwriter.worksheet import Worksheet

CHART_WIDTH = 470  # pixels; two charts sit side by side beside the identification block
CHART_HEIGHT = 300
CHART_GAP = 12
POINT_COLOUR = "#24456B"  # slate, as "info": the data themselves
LINE_COLOUR = "#7A3E00"  # clay: the fit
DROPPED_COLOUR = "#6B1D5C"  # plum, as "mismatch": what the author's formula missed
SERIES_NAMES = ("seen by the author's formula", "missed by the author's formula")


@dataclass(frozen=True)
class Block:
    """Rows ``first``..``last`` (0-based, inclusive) of the used-points columns."""

    first: int
    last: int

    @property
    def empty(self) -> bool:
        return self.last < self.first


@dataclass(frozen=True)
class ChartSource:
    sheet: str
    used: Block  # every used point: the fitted line
    seen: Block  # the used points the author's formula saw (the first rows of ``used``)
    missed: Block  # those it did not see (the last rows): their own series
    x_col: int  # the first used x column (one x) or the fitted column (several)
    y_col: int
    fitted_col: int
    residual_col: int
    x_title: str
    y_title: str
    against_fitted: bool


def _ref(source: ChartSource, block: Block, col: int) -> list[object]:
    return [source.sheet, block.first, col, block.last, col]


def _points(name: str, colour: str, marker: str, size: int = 6) -> dict[str, object]:
    return {
        "name": name,
        "marker": {
            "type": marker,
            "size": size,
            "border": {"color": colour},
            "fill": {"color": colour},
        },
        "line": {"none": True},
    }


def _axes(chart: Any, x_title: str, y_title: str) -> None:
    grid = {"visible": True, "line": {"color": "#E2E2E2"}}
    chart.set_x_axis({"name": x_title, "major_gridlines": grid, "label_position": "low"})
    chart.set_y_axis({"name": y_title, "major_gridlines": grid})
    chart.set_legend({"position": "bottom"})
    chart.set_size({"width": CHART_WIDTH, "height": CHART_HEIGHT})


def _point_series(chart: Any, source: ChartSource, value_col: int, names: tuple[str, str]) -> None:
    """The seen points, then the missed ones in a shape and colour of their own."""
    seen_name, missed_name = names if not source.missed.empty else ("points used", "")
    if not source.seen.empty:
        series = _points(seen_name, POINT_COLOUR, "circle")
        series |= {
            "categories": _ref(source, source.seen, source.x_col),
            "values": _ref(source, source.seen, value_col),
        }
        chart.add_series(series)
    if not source.missed.empty:
        # A different shape as well as a different colour: it must show in grey print too.
        series = _points(missed_name, DROPPED_COLOUR, "triangle", 8)
        series |= {
            "categories": _ref(source, source.missed, source.x_col),
            "values": _ref(source, source.missed, value_col),
        }
        chart.add_series(series)


def fit_chart(book: Workbook, source: ChartSource) -> Any:
    chart: Any = book.add_chart({"type": "scatter", "subtype": "straight"})
    _point_series(chart, source, source.y_col, SERIES_NAMES)
    chart.add_series(
        {
            "name": "line of equality" if source.against_fitted else "fitted line",
            "categories": _ref(source, source.used, source.x_col),
            "values": _ref(source, source.used, source.fitted_col),
            "marker": {"type": "none"},
            "line": {"color": LINE_COLOUR, "width": 1.5},
        }
    )
    title = "Observed against fitted" if source.against_fitted else "Data and fitted line"
    chart.set_title({"name": title, "name_font": {"size": 11, "bold": True}})
    _axes(chart, source.x_title, source.y_title)
    return chart


def residual_chart(book: Workbook, source: ChartSource) -> Any:
    chart: Any = book.add_chart({"type": "scatter"})
    _point_series(chart, source, source.residual_col, SERIES_NAMES)
    against = "fitted value" if source.against_fitted else "x"
    chart.set_title(
        {"name": f"Residuals against {against}", "name_font": {"size": 11, "bold": True}}
    )
    _axes(chart, source.x_title, "residual (y minus fitted)")
    if source.missed.empty:
        chart.set_legend({"none": True})  # one series needs no legend
    return chart


def insert_charts(book: Workbook, sheet: Worksheet, source: ChartSource, row: int, col: int) -> int:
    """Insert both charts side by side at (row, col); return how many rows they cover."""
    if source.used.empty:
        return 0
    sheet.insert_chart(row, col, fit_chart(book, source), {"object_position": 3})
    sheet.insert_chart(
        row,
        col,
        residual_chart(book, source),
        {"x_offset": CHART_WIDTH + CHART_GAP, "object_position": 3},
    )
    return CHART_HEIGHT // 20 + 1  # default rows are 20 pixels high
