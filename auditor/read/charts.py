"""Charts of a workbook: which series each chart plots, from which cells, and its trendlines.

A sheet (worksheet or chart sheet) points to a drawing part through its relationships, and the
drawing to its chart parts. Each chart part holds one or more plots (``c:scatterChart``,
``c:lineChart``, ``c:barChart``, …), each plot its series (``c:ser``), and each series:

* its x values: ``c:xVal`` in a scatter or bubble plot, ``c:cat`` (categories) in the others;
* its y values: ``c:yVal`` or ``c:val``;
* for each, a reference (``c:numRef``/``c:strRef`` with a ``c:f`` such as
  ``'My Data'!$B$2:$B$9``, kept as text: the locator parses it against the workbook's sheets and
  names) with the values the application cached when it last drew the chart, or literal values
  only (``c:numLit``/``c:strLit``, no reference);
* its trendlines (``c:trendline``): type (linear, poly, exp, log, power, movingAvg), polynomial
  order or moving-average period, a forced intercept, and whether the equation and R² are shown.

Parts are read through :mod:`auditor.xmlsafe`. A chart part that cannot be read costs only that
chart: it comes back with ``problem`` set, and the workbook's cells are read as usual.
"""

from __future__ import annotations

import zipfile
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from auditor.errors import UnreadableWorkbook
from auditor.read.chart_points import CHART_NS, CachedPoints, Point
from auditor.read.parts import SheetEntry, read_relationships
from auditor.read.xmlsafe import parse_part

MAX_CHART_PARTS = 500  # a workbook with more charts than this is not a regression workbook
# Plots whose series carry x values of their own; the others plot against categories 1..n.
XY_PLOTS = ("scatter", "bubble")
TRENDLINE_TYPES = ("linear", "poly", "exp", "log", "power", "movingAvg")


@dataclass(frozen=True)
class SeriesValues:
    """One axis of a series: the reference as written, and the values cached beside it."""

    formula: str | None  # the reference text, e.g. "'Run Data'!$B$2:$B$9"; None for literals
    # By point index; None where the cache has no point. Read when first asked for (a tuple's
    # behaviour: auditor.read.chart_points).
    cached: Sequence[Point]
    text: bool = False  # a string reference or literal (category labels)


@dataclass(frozen=True)
class Trendline:
    kind: str  # one of TRENDLINE_TYPES (or what the file says, for an unknown type)
    order: int | None = None  # polynomial order
    period: int | None = None  # moving-average period
    intercept: float | None = None  # the value the author forced the intercept to
    display_equation: bool = False
    display_r_squared: bool = False
    label_format: str = "General"  # number format of the equation label
    name: str = ""


@dataclass(frozen=True)
class ChartSeries:
    plot: str  # "scatter", "line", "bar", "area", ... (the plot element without "Chart")
    index: int  # position of the series in the chart (c:order, else document order)
    name: str
    x: SeriesValues | None  # xVal or cat; None when the series has none
    y: SeriesValues | None  # yVal or val
    trendlines: tuple[Trendline, ...] = ()

    @property
    def x_by_position(self) -> bool:
        """Plotted (and fitted) against 1..n rather than against x values of its own."""
        return self.plot not in XY_PLOTS or self.x is None or self.x.text


@dataclass(frozen=True)
class Chart:
    part: str  # "xl/charts/chart2.xml"
    sheet: str  # the worksheet the chart sits on, or the chart sheet's own name
    on_chart_sheet: bool = False
    title: str = ""
    series: tuple[ChartSeries, ...] = ()
    problem: str = ""  # why the part could not be read; empty when it was

    @property
    def label(self) -> str:
        name = self.part.rsplit("/", 1)[-1].removesuffix(".xml")
        where = "chart sheet" if self.on_chart_sheet else "sheet"
        titled = f" {self.title!r}" if self.title else ""
        return f"chart {name}{titled} on {where} {self.sheet!r}"


def read_charts(archive: zipfile.ZipFile, sheets: Iterable[SheetEntry], label: str) -> list[Chart]:
    """Every chart drawn on a worksheet or filling a chart sheet, in sheet order."""
    charts: list[Chart] = []
    seen: set[str] = set()
    for entry in sheets:
        for part in _chart_parts(archive, entry.part, label):
            if part in seen or len(seen) >= MAX_CHART_PARTS:
                continue
            seen.add(part)
            on_chart_sheet = entry.kind == "chartsheet"
            try:
                charts.append(_read_chart(archive, part, entry.name, on_chart_sheet, label))
            except UnreadableWorkbook as exc:
                charts.append(Chart(part, entry.name, on_chart_sheet, problem=str(exc)))
    return charts


def _chart_parts(archive: zipfile.ZipFile, sheet_part: str, label: str) -> list[str]:
    """The chart parts reached from a sheet through its drawings."""
    found: list[str] = []
    try:
        sheet_rels = read_relationships(archive, sheet_part, label)
    except UnreadableWorkbook:
        return found
    for rel_type, target in sorted(sheet_rels.values(), key=lambda item: item[1]):
        if not rel_type.endswith("/drawing") or target not in archive.NameToInfo:
            continue
        try:
            drawing_rels = read_relationships(archive, target, label)
        except UnreadableWorkbook:
            continue
        found.extend(
            chart
            for kind, chart in sorted(drawing_rels.values(), key=lambda item: _part_order(item[1]))
            if kind.endswith("/chart") and chart in archive.NameToInfo
        )
    return found


def _part_order(part: str) -> tuple[int, str]:
    digits = "".join(ch for ch in part.rsplit("/", 1)[-1] if ch.isdigit())
    return (int(digits) if digits else 0, part)


def _read_chart(
    archive: zipfile.ZipFile, part: str, sheet: str, on_chart_sheet: bool, label: str
) -> Chart:
    root = parse_part(archive, part, f"{label}: part {part!r}")
    plot_area = root.find(f"{CHART_NS}chart/{CHART_NS}plotArea")
    series: list[ChartSeries] = []
    if plot_area is not None:
        for plot in plot_area:
            name = _local(plot.tag)
            if not name.endswith("Chart"):
                continue
            kind = name.removesuffix("Chart").removesuffix("3D")
            for position, element in enumerate(plot.iterfind(f"{CHART_NS}ser")):
                series.append(_read_series(element, kind, position, sheet))
    series.sort(key=lambda s: s.index)
    title = _title(root.find(f"{CHART_NS}chart/{CHART_NS}title"))
    return Chart(part, sheet, on_chart_sheet, title, tuple(series))


def _read_series(element: Any, plot: str, position: int, sheet: str) -> ChartSeries:
    order = _int_val(element.find(f"{CHART_NS}order"))
    x = _values(element.find(f"{CHART_NS}xVal"), sheet)
    if x is None:
        x = _values(element.find(f"{CHART_NS}cat"), sheet)
    y = _values(element.find(f"{CHART_NS}yVal"), sheet)
    if y is None:
        y = _values(element.find(f"{CHART_NS}val"), sheet)
    trendlines = tuple(_trendline(t) for t in element.iterfind(f"{CHART_NS}trendline"))
    return ChartSeries(
        plot=plot,
        index=order if order is not None else position,
        name=_series_name(element.find(f"{CHART_NS}tx")),
        x=x,
        y=y,
        trendlines=trendlines,
    )


def _values(axis: Any, sheet: str) -> SeriesValues | None:
    if axis is None:
        return None
    for child in axis:
        kind = _local(child.tag)
        text = kind in ("strRef", "strLit", "multiLvlStrRef")
        if kind in ("numRef", "strRef", "multiLvlStrRef"):
            formula_element = child.find(f"{CHART_NS}f")
            formula = (formula_element.text or "").strip() if formula_element is not None else ""
            cache = next((c for c in child if _local(c.tag).endswith("Cache")), None)
            return SeriesValues(formula or None, CachedPoints(cache), text)
        if kind in ("numLit", "strLit"):
            return SeriesValues(None, CachedPoints(child), text)
    return None


def _trendline(element: Any) -> Trendline:
    def child(name: str) -> Any:
        return element.find(f"{CHART_NS}{name}")

    kind_element = child("trendlineType")
    kind = kind_element.get("val", "linear") if kind_element is not None else "linear"
    intercept_element = child("intercept")
    intercept = None
    if intercept_element is not None:
        parsed = _number_or_text(intercept_element.get("val", ""))
        intercept = parsed if isinstance(parsed, float) else None
    label = child("trendlineLbl")
    number_format = label.find(f"{CHART_NS}numFmt") if label is not None else None
    name_element = child("name")
    return Trendline(
        kind=kind,
        order=_int_val(child("order")),
        period=_int_val(child("period")),
        intercept=intercept,
        display_equation=_flag(child("dispEq")),
        display_r_squared=_flag(child("dispRSqr")),
        label_format=(number_format.get("formatCode") if number_format is not None else None)
        or "General",
        name=(name_element.text or "") if name_element is not None else "",
    )


def _flag(element: Any) -> bool:
    """A DrawingML boolean: present without ``val`` means true."""
    if element is None:
        return False
    return element.get("val", "1").strip().lower() in ("1", "true")


def _int_val(element: Any) -> int | None:
    return None if element is None else _int_attr(element.get("val"))


def _int_attr(text: str | None) -> int | None:
    try:
        return int(text) if text is not None else None
    except ValueError:
        return None


def _number_or_text(text: str) -> float | str:
    try:
        return float(text)
    except ValueError:
        return text


def _series_name(tx: Any) -> str:
    if tx is None:
        return ""
    texts = [v.text for v in tx.iter(f"{CHART_NS}v") if v.text]
    if texts:
        return " ".join(texts)
    formula = tx.find(f".//{CHART_NS}f")
    return (formula.text or "") if formula is not None else ""


def _title(title: Any) -> str:
    if title is None:
        return ""
    runs = [t.text for t in title.iter("{http://schemas.openxmlformats.org/drawingml/2006/main}t")]
    if runs:
        return "".join(r for r in runs if r)
    return " ".join(v.text for v in title.iter(f"{CHART_NS}v") if v.text)


def _local(tag: object) -> str:
    return str(tag).rsplit("}", 1)[-1]
