"""The fast sheet scanner reads exactly what the lxml reader reads, or hands the part to it.

Every workbook is read twice, ``engine="stream"`` (the scanner, lxml for what it does not
recognise) and ``engine="lxml"``, and the two readings must be identical
(:func:`auditor.read.equality.workbook_differences`: values compared with their types) or fail
with the same message. The inputs: every fixture workbook, the fuzz corpus of
``test_fuzz.py`` (seeded mutations), workbooks generated with XlsxWriter and openpyxl holding
every kind of cell, and hand-written sheet XML for what writers rarely emit (namespace prefixes,
entities and character references, CDATA, comments, odd attribute order and quoting, line
ends). Expected values of the hand-written cases follow the XML 1.0 specification (entities
2.4/4.6, line ends 2.11, attribute normalisation 3.3.3) and ECMA-376 (cell types 18.18.11).
"""

from __future__ import annotations

import datetime
import random
from collections import Counter
from pathlib import Path

import openpyxl
import pytest
import xlsxwriter
from package_builders import DECL, MAIN, REL, package_parts, sheet_xml, write_package
from test_fuzz import SOURCES, mutate

from auditor.errors import UnreadableWorkbook
from auditor.read import scan
from auditor.read.equality import index_differences, workbook_differences
from auditor.read.open import read_workbook
from auditor.read.workbook import ErrorValue, Workbook

ROOT = Path(__file__).resolve().parents[2]
FIXTURES = sorted((ROOT / "fixtures").rglob("*.xlsx"))


def _both(path: Path) -> tuple[Workbook | str, Workbook | str, Counter[str]]:
    """Both readings (or their error messages) and the parts the scanner handed to lxml."""
    readings: list[Workbook | str] = []
    before = Counter(scan.FALLBACKS)
    for engine in ("stream", "lxml"):
        try:
            readings.append(read_workbook(path, engine=engine))
        except UnreadableWorkbook as exc:
            readings.append(f"unreadable: {exc}")
        if engine == "stream":
            handed = scan.FALLBACKS - before
    return readings[0], readings[1], handed


def _assert_same(path: Path) -> tuple[Workbook | str, Counter[str]]:
    fast, slow, handed = _both(path)
    if isinstance(fast, str) or isinstance(slow, str):
        assert fast == slow
    else:
        assert workbook_differences(slow, fast) == []
        assert index_differences(fast) == []
    return fast, handed


def test_every_fixture_reads_the_same_and_by_the_scanner() -> None:
    assert len(FIXTURES) > 100
    handed: Counter[str] = Counter()
    cells = 0
    for path in FIXTURES:
        fast, fell_back = _assert_same(path)
        handed += fell_back
        assert not isinstance(fast, str), path
        cells += sum(len(s.cells) for s in fast.sheets.values())
    # LibreOffice and XlsxWriter write nothing the scanner leaves to lxml.
    assert handed == Counter()
    assert cells > 10_000


# test_fuzz's mutate() leaves its spooled temporary file to the garbage collector.
@pytest.mark.filterwarnings("ignore::pytest.PytestUnraisableExceptionWarning")
def test_the_fuzz_corpus_reads_the_same_or_fails_the_same(tmp_path: Path) -> None:
    outcomes: Counter[str] = Counter()
    for seed in range(300):
        path = tmp_path / f"case_{seed}.xlsx"
        path.write_bytes(mutate(random.Random(seed), SOURCES[seed % len(SOURCES)]))
        fast, _ = _assert_same(path)
        outcomes["unreadable" if isinstance(fast, str) else "read"] += 1
    # Both endings occur: the comparison covers broken parts and readable ones.
    assert outcomes["unreadable"] > 30 and outcomes["read"] > 30, outcomes


def _xlsxwriter_book(path: Path, seed: int, constant_memory: bool) -> Path:
    rng = random.Random(seed)
    book = xlsxwriter.Workbook(str(path), {"constant_memory": constant_memory})
    sheet = book.add_worksheet("Kinds of cells")
    bold, percent = book.add_format({"bold": True}), book.add_format({"num_format": "0.00%"})
    date = book.add_format({"num_format": "yyyy-mm-dd hh:mm"})
    texts = ["plain", " spaced ", "a<b>&c\"d'e", "two\nlines", "tab\there", "ünï©ødé ✓", "=1+1"]
    for row in range(60):
        sheet.write_number(row, 0, rng.uniform(-1e6, 1e6), percent if row % 3 else None)
        sheet.write_number(row, 1, rng.randint(-5, 5))
        sheet.write_string(row, 2, rng.choice(texts))
        sheet.write_boolean(row, 3, bool(row % 2))
        sheet.write_datetime(
            row, 4, datetime.datetime(2020, 1, 1, 6) + datetime.timedelta(row), date
        )
        sheet.write_formula(row, 5, f'=A{row + 1}*2&"<x>"', bold, f"{row}<x>")
        sheet.write_formula(row, 6, f"=IF(A{row + 1}>0,B{row + 1},1/0)", None, "#DIV/0!")
        sheet.write_number(row, 7, rng.choice([1e-300, 1.5e300, 0.0, -0.0, 123456789012345.0]))
    if not constant_memory:
        sheet.write_rich_string(61, 2, "Ab", bold, "sorb", "ance")
        sheet.write_array_formula(62, 0, 66, 1, "{=LINEST(B1:B60,A1:A60,TRUE,TRUE)}")
        sheet.write_dynamic_array_formula(62, 3, 62, 3, "=_xlfn.UNIQUE(B1:B60)")
        sheet.write_url(63, 2, "https://example.org/a?b=1&c=2", string="link & more")
        sheet.merge_range(68, 0, 68, 3, "merged <cells>")
    sheet.write_blank(70, 0, None, bold)
    book.define_name("spread", "='Kinds of cells'!$A$1:$A$60")
    book.close()
    return path


def _openpyxl_book(path: Path) -> Path:
    from openpyxl.cell.rich_text import CellRichText, TextBlock
    from openpyxl.cell.text import InlineFont
    from openpyxl.worksheet.formula import ArrayFormula

    book = openpyxl.Workbook()
    sheet = book.active
    assert sheet is not None
    sheet.title = "Mixed"
    rows = [
        [1, 2.5, "x & y", True, datetime.date(2021, 3, 4), None, "#N/A"],
        [-7, 1e-20, "<tag>", False, datetime.datetime(2021, 3, 4, 5, 6, 7), "", "#DIV/0!"],
        ["=SUM(A1:A2)", '=A1&"&amp;"', '=IF(A1<0,"neg","pos")', 0, 1e308, " ", "end"],
    ]
    for row in rows:
        sheet.append(row)
    sheet["B2"].number_format = "0.000E+00"
    sheet["H1"] = ArrayFormula("H1:H3", "=A1:A3*2")
    sheet["I1"] = CellRichText("plain ", TextBlock(InlineFont(b=True), "bold"))
    sheet.merge_cells("A5:C6")
    sheet["A5"] = "merged"
    book.save(path)
    return path


def test_generated_workbooks_of_every_cell_kind_read_the_same(tmp_path: Path) -> None:
    paths = [_openpyxl_book(tmp_path / "openpyxl.xlsx")]
    for seed in range(3):
        paths.append(_xlsxwriter_book(tmp_path / f"xw{seed}.xlsx", seed, False))
        paths.append(_xlsxwriter_book(tmp_path / f"xwc{seed}.xlsx", seed, True))
    for path in paths:
        fast, handed = _assert_same(path)
        assert not isinstance(fast, str) and handed == Counter(), path
    first = read_workbook(paths[1]).sheets["Kinds of cells"]
    assert first.cells[(1, 6)].formula == '=A1*2&"<x>"' and first.cells[(1, 6)].value == "0<x>"
    assert first.cells[(1, 7)].value == ErrorValue("#DIV/0!")
    assert first.cells[(62, 3)].value == "Absorbance"  # rich text runs joined
    inline = read_workbook(paths[2]).sheets["Kinds of cells"]
    assert {inline.cells[(r, 3)].value for r in range(1, 61)} <= {
        "plain",
        " spaced ",
        "a<b>&c\"d'e",
        "two\nlines",
        "tab\there",
        "ünï©ødé ✓",
        "=1+1",
    }


def _crafted(tmp_path: Path, name: str, sheet: str | bytes) -> Path:
    return write_package(tmp_path / f"{name}.xlsx", package_parts({"S": sheet}, ["zero", "one"]))  # type: ignore[dict-item]


ROW = '<row r="1">{}</row>'
# name, sheet XML, whether the scanner reads it itself (False: handed to lxml)
CASES = [
    ("plain", sheet_xml(ROW.format('<c r="A1"><v>1</v></c><c r="B1" t="s"><v>1</v></c>')), True),
    (
        "attribute order and quoting",
        sheet_xml(ROW.format("<c t='s' r='A1' ><v>0</v></c><c s=\"0\" r=\"B1\"><v>2.5</v></c>")),
        True,
    ),
    (
        "entities and character references",
        sheet_xml(
            ROW.format(
                '<c r="A1" t="str"><f>IF(B1&gt;1,"a&amp;b","&#x3B1;")</f><v>a&amp;b&#946;</v></c>'
                '<c r="B1" t="inlineStr"><is><t>&lt;&quot;&apos;&#13;</t></is></c>'
            )
        ),
        True,
    ),
    (
        "line ends",
        sheet_xml(ROW.format('<c r="A1" t="str"><f>"a"&amp;\r\n"b"</f><v>x\r\ny\rz</v></c>')),
        True,
    ),
    (
        "rich inline text",
        sheet_xml(
            ROW.format(
                '<c r="A1" t="inlineStr"><is><r><rPr><b/></rPr><t>Ab</t></r>'
                '<r><t xml:space="preserve"> c </t></r><rPh sb="0" eb="1"><t>x</t></rPh></is></c>'
            )
        ),
        True,
    ),
    (
        "no references",
        sheet_xml(
            '<row><c><v>1</v></c><c t="b"><v>1</v></c></row><row><c r="C2"><v>3</v></c></row>'
        ),
        True,
    ),
    (
        "types",
        sheet_xml(
            ROW.format(
                '<c r="A1" t="e"><v>#N/A</v></c><c r="B1" t="d"><v>2021-03-04T12:00:00</v></c>'
                '<c r="C1"><v>1E400</v></c><c r="D1" t="n"><v>2.5E-3</v></c>'
                '<c r="E1" t="b"><v>0</v></c>'
                '<c r="F1"><v/></c><c r="G1" t="str"><v xml:space="preserve"> 7 </v></c>'
            )
        ),
        True,
    ),
    (
        "shared, array and data-table formulas",
        sheet_xml(
            '<row r="1"><c r="A1"><f t="shared" ref="A1:A3" si="0">B1*2</f><v>2</v></c>'
            '<c r="C1"><f t="array" ref="C1:C2">B1:B2</f><v>1</v></c>'
            '<c r="D1"><f t="dataTable" ref="D1:D2" dt2D="0" dtr="0" r1="B1"/><v>4</v></c></row>'
            '<row r="2" spans="1:4"><c r="A2"><f t="shared" si="0"/><v>4</v></c></row>'
            '<row r="3"><c r="A3"><f t="shared" si="0"/></c></row>'
        ),
        True,
    ),
    (
        "an unknown element of the main namespace in a cell",
        sheet_xml(ROW.format('<c r="A1"><extLst><ext uri="u"/></extLst><v>5</v></c>')),
        True,
    ),
    (
        "prefixed main namespace",
        f'{DECL}<x:worksheet xmlns:x="{MAIN}" xmlns:r="{REL}"><x:sheetData>'
        '<x:row r="1"><x:c r="A1" t="s"><x:v>1</x:v></x:c><x:c r="B1"><x:f>A1</x:f><x:v>1</x:v>'
        "</x:c></x:row></x:sheetData><x:mergeCells><x:mergeCell ref='A2:B3'/></x:mergeCells>"
        "</x:worksheet>",
        True,
    ),
    (
        "row attributes of another declared namespace",
        sheet_xml(
            '<row r="1" spans="1:2" x14ac:dyDescent="0.25"><c r="A1" s="0" t="n" cm="1">'
            "<v>1</v></c></row><row r='2' x14ac:dyDescent='0.3' hidden=\"1\">"
            "<c r='A2'><v>2</v></c></row>"
        ).replace("<worksheet ", '<worksheet xmlns:x14ac="urn:x14ac" ', 1),
        True,
    ),
    (
        "an attribute of an undeclared prefix",
        sheet_xml(ROW.format('<c r="A1" q:x="1"><v>1</v></c>')),
        False,
    ),
    ("CDATA", sheet_xml(ROW.format('<c r="A1"><v><![CDATA[5]]></v></c>')), False),
    ("comment", sheet_xml(ROW.format('<!-- note --><c r="A1"><v>5</v></c>')), False),
    ("processing instruction", sheet_xml(ROW.format('<?pi x?><c r="A1"><v>5</v></c>')), False),
    ("comment in a value", sheet_xml(ROW.format('<c r="A1"><v>5<!-- x -->1</v></c>')), False),
    ("comment between rows", sheet_xml(ROW.format('<c r="A1"><v>5</v></c>') + "<!--x-->"), False),
    (
        "instruction between rows",
        sheet_xml("<?pi x?>" + ROW.format('<c r="A1"><v>5</v></c>')),
        False,
    ),
    ("CDATA in a formula", sheet_xml(ROW.format('<c r="A1"><f><![CDATA[1+2]]></f></c>')), False),
    (
        "namespace declared inside the data",
        sheet_xml(ROW.format(f'<c r="A1" xmlns:q="{MAIN}"><q:v>5</q:v></c>')),
        False,
    ),
    (
        "element of another namespace",
        sheet_xml(ROW.format('<c r="A1"><r:v>5</r:v><v>6</v></c>')),
        False,
    ),
    ("undefined entity", sheet_xml(ROW.format('<c r="A1" t="str"><v>&bogus;</v></c>')), False),
    (
        "forbidden character reference",
        sheet_xml(ROW.format('<c r="A1" t="str"><v>&#1;</v></c>')),
        False,
    ),
    ("duplicate attribute", sheet_xml(ROW.format('<c r="A1" r="A1"><v>1</v></c>')), False),
    ("duplicate row number", sheet_xml('<row r="1" r="2"><c r="A1"><v>1</v></c></row>'), False),
    (
        "one attribute under two prefixes",
        sheet_xml(ROW.format('<c r="A1" p:x="1" q:x="2"><v>1</v></c>')).replace(
            "<worksheet ", '<worksheet xmlns:p="urn:same" xmlns:q="urn:same" ', 1
        ),
        False,
    ),
    ("mismatched tags", sheet_xml(ROW.format('<c r="A1"><v>1</c></v>')), False),
    ("column beyond XFD", sheet_xml(ROW.format('<c r="XFE1"><v>1</v></c>')), False),
    ("shared string out of range", sheet_xml(ROW.format('<c r="A1" t="s"><v>9</v></c>')), False),
    ("a row outside sheetData", sheet_xml("", '<row r="9"><c r="A9"><v>1</v></c></row>'), False),
    (
        "empty sheetData and merged cells",
        sheet_xml("", '<mergeCells count="1"><mergeCell ref="A1:B2"/></mergeCells>'),
        True,
    ),
    (
        "self-closed sheetData",
        sheet_xml("").replace("<sheetData></sheetData>", "<sheetData/>"),
        True,
    ),
    (
        "Latin-1",
        sheet_xml(ROW.format('<c r="A1" t="inlineStr"><is><t>caf\u00e9</t></is></c>'))
        .replace("UTF-8", "ISO-8859-1")
        .encode("latin-1"),
        False,
    ),
    (
        "document type",
        sheet_xml("").replace("<worksheet", '<!DOCTYPE w [<!ENTITY e "x">]><worksheet', 1),
        False,
    ),
]


@pytest.mark.parametrize(("name", "sheet", "scanned"), CASES, ids=[c[0] for c in CASES])
def test_crafted_sheets(tmp_path: Path, name: str, sheet: str | bytes, scanned: bool) -> None:
    fast, handed = _assert_same(_crafted(tmp_path, name.replace(" ", "_"), sheet))
    assert (handed == Counter()) is scanned, handed


def _values(tmp_path: Path, name: str) -> dict[tuple[int, int], object]:
    sheet = dict((c[0], c[1]) for c in CASES)[name]
    book = read_workbook(_crafted(tmp_path, "v", sheet))
    return {k: (c.value, c.formula) for k, c in book.sheets["S"].cells.items()}


def test_what_the_crafted_cells_hold(tmp_path: Path) -> None:
    """Values read as XML 1.0 defines them, by the scanner itself (see CASES)."""
    entities = _values(tmp_path, "entities and character references")
    assert entities[(1, 1)] == ("a&b\u03b2", '=IF(B1>1,"a&b","\u03b1")')
    assert entities[(1, 2)] == ("<\"'\r", None)  # a character reference keeps its \r
    line_ends = _values(tmp_path, "line ends")
    assert line_ends[(1, 1)] == ("x\ny\nz", '="a"&\n"b"')
    assert _values(tmp_path, "rich inline text")[(1, 1)] == ("Ab c ", None)
    assert _values(tmp_path, "no references") == {
        (1, 1): (1, None),
        (1, 2): (True, None),
        (2, 3): (3, None),
    }
    types = _values(tmp_path, "types")
    assert types[(1, 1)] == (ErrorValue("#N/A"), None)
    assert types[(1, 2)] == (44259.5, None)  # 2021-03-04 noon as a serial day number
    assert types[(1, 3)] == (ErrorValue("#NUM!"), None)
    assert types[(1, 4)] == (0.0025, None) and types[(1, 5)] == (False, None)
    assert (1, 6) not in types and types[(1, 7)] == (" 7 ", None)
    formulas = _values(tmp_path, "shared, array and data-table formulas")
    assert [formulas[(r, 1)][1] for r in (1, 2, 3)] == ["=B1*2", "=B2*2", "=B3*2"]
    assert formulas[(1, 4)] == (4, None)  # a what-if table keeps its stored value
    prefixed = read_workbook(
        _crafted(tmp_path, "p", dict((c[0], c[1]) for c in CASES)["prefixed main namespace"])
    )
    assert {k: c.value for k, c in prefixed.sheets["S"].cells.items()} == {(1, 1): "one", (1, 2): 1}


def test_the_lxml_reader_can_be_forced(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = _crafted(tmp_path, "forced", CASES[0][1])
    scanned: list[str] = []
    original = scan.SheetScanner.read

    def spy(self: scan.SheetScanner, part: str) -> object:
        scanned.append(part)
        return original(self, part)

    monkeypatch.setattr(scan.SheetScanner, "read", spy)
    read_workbook(path)
    assert scanned == ["xl/worksheets/sheet1.xml"]
    read_workbook(path, engine="lxml")
    monkeypatch.setenv("REGAUDIT_READER", "lxml")
    book = read_workbook(path)
    assert scanned == ["xl/worksheets/sheet1.xml"]  # neither call went through the scanner
    assert {k: c.value for k, c in book.sheets["S"].cells.items()} == {(1, 1): 1, (1, 2): "one"}


def test_tiny_blocks_split_rows_characters_and_line_ends(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Blocks of a few bytes cut rows, multi-byte characters, "\\r\\n" pairs and the markers the
    scanner looks for in two: the result must not change."""
    monkeypatch.setattr(scan, "CHUNK", 5)
    paths = [_crafted(tmp_path, f"case{i}", case[1]) for i, case in enumerate(CASES)]
    paths += [p for p in FIXTURES if "layouts" not in p.parts][:12]
    for path in paths:
        fast, handed = _assert_same(path)
    monkeypatch.setattr(scan, "MAX_PENDING", 64)  # a row longer than that goes to lxml
    long_row = sheet_xml(ROW.format("".join(f'<c r="{c}1"><v>{c}</v></c>' for c in "ABCDEFGH")))
    fast, handed = _assert_same(_crafted(tmp_path, "long", long_row))
    assert handed == Counter({"a row longer than the scanner reads at once": 1})


@pytest.mark.parametrize(
    ("name", "sheet"),
    [
        ("attributes on sheetData", sheet_xml("").replace("<sheetData>", '<sheetData a="1">')),
        ("never ends", sheet_xml(ROW.format('<c r="A1"><v>1</v></c>')).split("</sheetData>")[0]),
        ("no sheetData", f'{DECL}<worksheet xmlns="{MAIN}"><dimension ref="A1"/></worksheet>'),
        ("text among rows", sheet_xml('<row r="1"><c r="A1"><v>1</v></c></row>stray')),
        ("a cell outside rows", sheet_xml('<c r="A1"><v>1</v></c>')),
    ],
)
def test_what_the_scanner_leaves_to_lxml(tmp_path: Path, name: str, sheet: str) -> None:
    fast, handed = _assert_same(_crafted(tmp_path, name.replace(" ", "_"), sheet))
    assert handed != Counter()


def _escaped(rng: random.Random, text: str, attribute: bool) -> str:
    """``text`` as XML character data, some characters at random as character references."""
    out: list[str] = []
    for char in text:
        code = ord(char)
        if char in "\t\n\r" and (attribute or char == "\r"):
            out.append(f"&#{code};")  # a literal one would be normalised by the parser
        elif rng.random() < 0.05 or char in "<&" or (attribute and char in "\"'"):
            out.append(
                rng.choice([f"&#{code};", f"&#x{code:x};", f"&#X{code:X};".replace("X", "x", 1)])
            )
        elif char == ">" and rng.random() < 0.5:
            out.append("&gt;")
        else:
            out.append(char)
    return "".join(out)


def _reserialised(rng: random.Random, data: bytes, prefixed: bool) -> bytes:
    """The same document written differently: attribute order and quotes, white space inside
    tags and between elements, empty elements closed either way, references for characters,
    the main namespace under a prefix or as the default. lxml reads both as the same tree."""
    from lxml import etree

    root = etree.fromstring(data)
    names = {uri: prefix for prefix, uri in root.nsmap.items() if prefix}
    if prefixed:
        names[MAIN] = "x"

    def qualified(tag: str) -> str:
        uri, _, local = tag[1:].partition("}") if tag.startswith("{") else ("", "", tag)
        prefix = names.get(uri) if uri else None
        return f"{prefix}:{local}" if prefix else local

    def space() -> str:
        return rng.choice(["", "", " ", "\n", "\r\n", "\t "])

    def write(element: etree._Element, out: list[str], top: bool) -> None:
        items = list(element.attrib.items())
        rng.shuffle(items)
        if top:
            declared = {f"xmlns:{p}": u for u, p in names.items()}
            if not prefixed:
                declared["xmlns"] = MAIN
            items = list(declared.items()) + items
        out.append(f"<{qualified(element.tag)}")
        for name, value in items:
            quote = rng.choice("\"'")
            out.append(
                f"{rng.choice([' ', '  ', chr(10)])}{qualified(name)}{rng.choice(['', ' '])}="
            )
            out.append(f"{quote}{_escaped(rng, value, True)}{quote}")
        children = list(element)
        if not children and not element.text and rng.random() < 0.5:
            out.append(space().replace("\t", "") + "/>")
            return
        out.append(">")
        if element.text:
            out.append(_escaped(rng, element.text, False))
        for child in children:
            out.append(space())
            write(child, out, False)
        out.append(space() if children else "")
        out.append(f"</{qualified(element.tag)}>")

    out: list[str] = ['<?xml version="1.0" encoding="UTF-8"?>\n']
    write(root, out, True)
    return "".join(out).encode("utf-8")


def test_the_same_sheets_written_differently_read_the_same(tmp_path: Path) -> None:
    """Generated variety of serialisation over the fixtures' own sheets: each rewritten sheet
    reads as the original does, by both readers, and by the scanner itself."""
    import zipfile

    sources = [p for p in FIXTURES if "layouts" not in p.parts][::4]
    assert len(sources) >= 12
    for index, source in enumerate(sources):
        rng = random.Random(index)
        original = read_workbook(source, engine="lxml")
        with zipfile.ZipFile(source) as archive:
            parts = {n: archive.read(n) for n in archive.namelist()}
        for name in parts:
            if name.startswith("xl/worksheets/sheet") and name.endswith(".xml"):
                parts[name] = _reserialised(rng, parts[name], prefixed=index % 2 == 1)
        path = write_package(tmp_path / f"rewritten{index}.xlsx", parts)  # type: ignore[arg-type]
        fast, handed = _assert_same(path)
        assert handed == Counter(), (source.name, handed)
        assert not isinstance(fast, str)
        differences = workbook_differences(original, fast)
        assert [d for d in differences if d != "sha256 differ"] == [], source.name
