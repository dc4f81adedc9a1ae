"""Reading charts at the reading boundary: series references and cached values, trendline
options, chart sheets, literal-only series, and damaged or hostile chart parts.

The workbooks are written by XlsxWriter (which writes the chart parts from the ECMA-376
DrawingML schema); the expected values are what the test itself wrote into them.
"""

from __future__ import annotations

import pickle
import random
import re
from pathlib import Path

import xlsxwriter
from lxml import etree
from package_builders import read_parts, write_package

from auditor.read.chart_points import CHART_NS, CachedPoints
from auditor.read.chart_points import read_points as _points
from auditor.read.open import read_workbook

SHEETS = ("Run Data", "O'Hare Line", "Данные", "測定")
X = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0]
Y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2]


def _book(path: Path) -> Path:
    book = xlsxwriter.Workbook(str(path))
    for name in SHEETS:
        sheet = book.add_worksheet(name)
        sheet.write_column(0, 0, X)
        sheet.write_column(0, 1, Y)
    scatter = book.add_chart({"type": "scatter"})
    scatter.add_series(
        {
            "name": "Bench",
            "categories": ["Run Data", 0, 0, 5, 0],
            "values": ["Run Data", 0, 1, 5, 1],
            "trendline": {
                "type": "linear",
                "intercept": 2.5,
                "display_equation": True,
                "display_r_squared": True,
            },
        }
    )
    scatter.add_series(
        {
            "categories": ["O'Hare Line", 0, 0, 5, 0],
            "values": ["O'Hare Line", 0, 1, 5, 1],
            "trendline": {"type": "polynomial", "order": 3},
        }
    )
    book.get_worksheet_by_name("Run Data").insert_chart("D2", scatter)
    line = book.add_chart({"type": "line"})
    line.add_series(
        {
            "categories": ["Данные", 0, 0, 5, 0],
            "values": ["Данные", 0, 1, 5, 1],
            "trendline": {"type": "moving_average", "period": 3},
        }
    )
    line.add_series(
        {"values": ["測定", 0, 1, 5, 1], "trendline": {"type": "exponential"}},
    )
    book.add_chartsheet("Overview Chart").set_chart(line)
    book.close()
    return path


def test_series_references_cached_values_and_trendlines(tmp_path: Path) -> None:
    workbook = read_workbook(_book(tmp_path / "charts.xlsx"))
    assert [(c.sheet, c.on_chart_sheet) for c in workbook.charts] == [
        ("Run Data", False),
        ("Overview Chart", True),
    ]
    scatter, line = workbook.charts
    assert [s.plot for s in scatter.series] == ["scatter", "scatter"]
    first, second = scatter.series
    assert first.name == "Bench"
    assert first.x is not None and first.y is not None
    assert (first.x.formula, first.y.formula) == ("'Run Data'!$A$1:$A$6", "'Run Data'!$B$1:$B$6")
    assert (first.x.cached, first.y.cached) == (tuple(X), tuple(Y))
    (trend,) = first.trendlines
    assert (trend.kind, trend.intercept, trend.display_equation, trend.display_r_squared) == (
        "linear",
        2.5,
        True,
        True,
    )
    assert second.x is not None and second.x.formula == "'O''Hare Line'!$A$1:$A$6"
    assert [(t.kind, t.order) for t in second.trendlines] == [("poly", 3)]
    assert not first.x_by_position
    categories, no_categories = line.series
    assert categories.plot == "line" and categories.x_by_position
    assert categories.x is not None and categories.x.formula == "Данные!$A$1:$A$6"
    assert [(t.kind, t.period) for t in categories.trendlines] == [("movingAvg", 3)]
    assert no_categories.x is None and no_categories.y is not None
    assert no_categories.y.formula == "測定!$B$1:$B$6"
    assert [t.kind for t in no_categories.trendlines] == ["exp"]


def _rewrite_chart(path: Path, out: Path, change: object) -> Path:
    parts = read_parts(path)
    name = "xl/charts/chart1.xml"
    parts[name] = change(parts[name].decode("utf-8")).encode("utf-8")  # type: ignore[operator]
    return write_package(out, dict(parts))


def _literal(text: str) -> str:
    """numRef (a reference and its cache) -> numLit (the cached points only), as a chart copied
    out of its workbook holds them."""
    return re.sub(
        r"<c:numRef><c:f>[^<]*</c:f><c:numCache>(.*?)</c:numCache></c:numRef>",
        r"<c:numLit>\1</c:numLit>",
        text,
        flags=re.S,
    )


def test_literal_series_keep_their_points_and_no_reference(tmp_path: Path) -> None:
    path = _rewrite_chart(_book(tmp_path / "a.xlsx"), tmp_path / "lit.xlsx", _literal)
    first = read_workbook(path).charts[0].series[0]
    assert first.x is not None and first.y is not None
    assert (first.x.formula, first.y.formula) == (None, None)
    assert (first.x.cached, first.y.cached) == (tuple(X), tuple(Y))


def test_a_damaged_chart_costs_only_that_chart(tmp_path: Path) -> None:
    path = _rewrite_chart(
        _book(tmp_path / "a.xlsx"), tmp_path / "cut.xlsx", lambda text: text[: len(text) // 2]
    )
    workbook = read_workbook(path)
    damaged, whole = workbook.charts
    assert damaged.series == () and "not well-formed XML" in damaged.problem
    assert whole.problem == "" and len(whole.series) == 2
    assert workbook.sheets["Run Data"].value(6, 2) == Y[-1]


def test_a_chart_part_with_a_document_type_is_refused(tmp_path: Path) -> None:
    def hostile(text: str) -> str:
        return text.replace("<c:chartSpace", '<!DOCTYPE x [<!ENTITY a "aaaa">]><c:chartSpace', 1)

    path = _rewrite_chart(_book(tmp_path / "a.xlsx"), tmp_path / "dtd.xlsx", hostile)
    damaged = read_workbook(path).charts[0]
    assert damaged.series == () and "document type" in damaged.problem


def _points_by_path(cache: etree._Element) -> tuple[float | str | None, ...]:
    """The definition: each <c:pt>'s first <c:v> found by path, idx and text as written."""
    count = int(cache.find(f"{CHART_NS}ptCount").get("val"))  # type: ignore[union-attr, arg-type]
    points: dict[int, float | str] = {}
    for point in cache.iterfind(f"{CHART_NS}pt"):
        value = point.find(f"{CHART_NS}v")
        try:
            index = int(point.get("idx"))  # type: ignore[arg-type]
        except (TypeError, ValueError):
            continue
        if value is None or value.text is None:
            continue
        try:
            points[index] = float(value.text)
        except ValueError:
            points[index] = value.text
    count = max([count, *(i + 1 for i in points)]) if points else count
    return tuple(points.get(i) for i in range(count))


def test_cached_points_are_read_as_their_definition_says() -> None:
    """Generated caches with points out of order, repeated, without an index or a value, with
    the value after another child or given twice, and values that are not numbers."""
    rng = random.Random(5)
    ns = CHART_NS[1:-1]
    for _ in range(300):
        points = []
        for _ in range(rng.randint(0, 12)):
            idx = rng.choice(
                ["", ' idx="0"', f' idx="{rng.randint(0, 15)}"', ' idx="x"', ' idx=" 2"']
            )
            value = rng.choice(["1.5", "-2", "7e3", "abc", "", " 4 ", "inf", "<![CDATA[9]]>"])
            inner = rng.choice(
                [f"<c:v>{value}</c:v>", f'<c:formatCode x="1"/><c:v>{value}</c:v>', "<c:v/>", ""]
            )
            if rng.random() < 0.1:
                inner += "<c:v>99</c:v>"
            points.append(f"<c:pt{idx}>{inner}</c:pt>")
        text = (
            f'<c:numCache xmlns:c="{ns}"><c:ptCount val="{rng.randint(0, 10)}"/>'
            f"{''.join(points)}</c:numCache>"
        )
        cache = etree.fromstring(text, etree.XMLParser(remove_comments=True, remove_pis=True))
        assert _points(cache) == _points_by_path(cache), text


def test_cached_points_are_read_when_first_asked_for_and_behave_as_their_tuple() -> None:
    """A series' cached points keep their element until something asks; then they read, index,
    slice, compare, hash and pickle as the tuple :func:`read_points` gives (generated caches)."""
    rng = random.Random(11)
    ns = CHART_NS[1:-1]
    for _ in range(200):
        values = [rng.choice(["1.5", "-2", "x", "7e3"]) for _ in range(rng.randint(0, 9))]
        points = "".join(
            f'<c:pt idx="{i}"><c:v>{v}</c:v></c:pt>'
            for i, v in enumerate(values)
            if rng.random() < 0.8
        )
        text = f'<c:numCache xmlns:c="{ns}"><c:ptCount val="{len(values)}"/>{points}</c:numCache>'
        cache = etree.fromstring(text)
        expected = _points(cache)
        lazy = CachedPoints(cache)
        assert lazy._points is None  # nothing read yet
        assert lazy == expected and expected == lazy and lazy == CachedPoints(cache)
        assert lazy._source is None  # read once, the element dropped
        assert len(lazy) == len(expected) and list(lazy) == list(expected)
        assert lazy[1:] == expected[1:] and hash(lazy) == hash(expected)
        if expected:
            assert lazy[-1] == expected[-1]
        assert pickle.loads(pickle.dumps(lazy)) == expected
        assert lazy != list(expected)  # a tuple's equality: a list is not the same
    assert CachedPoints(None) == () and len(CachedPoints(None)) == 0
