"""The scanner's cell-by-cell paths (formula cells, labels, every other shape) read what the lxml
reader reads, on generated rows that mix every cell shape the scanner takes from its fields.

Each sheet is written here: cells of every type ECMA-376 defines for ``t`` (18.18.11) with and
without a style, a stored value, a formula (ordinary, shared anchor and member, array, data
table, with entities), inline text, in random combinations and rows, some rows plain. The
scanner must read each part itself (nothing handed to lxml) and give the same workbook as the
lxml reader, cell for cell with the value's type, and an index that matches the cells.

Also: the scanner's search for markup it leaves to lxml, a second sheetData, and a workbook
freed by reference counting alone once let go (no cycle holds its cells).
"""

from __future__ import annotations

import random
from collections import Counter
from pathlib import Path

from package_builders import package_parts, sheet_xml, write_package

from auditor.read import scan
from auditor.read.equality import index_differences, workbook_differences
from auditor.read.open import read_workbook
from auditor.read.workbook import Workbook

STYLES = (
    '<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    '<numFmts count="1"><numFmt numFmtId="164" formatCode="0.000"/></numFmts>'
    '<cellXfs count="3"><xf numFmtId="0"/><xf numFmtId="164"/><xf numFmtId="14"/></cellXfs>'
    "</styleSheet>"
)
VALUES = {
    "": ["1", "-2.5", "3E2", "0", "45000"],
    "n": ["7", "0.125"],
    "s": ["0", "1"],
    "str": ["text", "a&amp;b", ""],
    "e": ["#DIV/0!", "#N/A"],
    "b": ["0", "1"],
    "inlineStr": [""],
}
FORMULAS = ["A1*2", "SUM(A1:B3)", "IF(A1&gt;1,&quot;x&quot;,1)", "{1,2}", "Data!A1+$B$2"]


def _cell(rng: random.Random, ref: str, row: int) -> str:
    t = rng.choice(list(VALUES))
    attributes = f' r="{ref}"'
    if rng.random() < 0.4:
        attributes += f' s="{rng.randrange(3)}"'
    if t:
        attributes += f' t="{t}"'
    inner = ""
    shape = rng.randrange(6)
    if shape == 1:
        inner += f"<f>{rng.choice(FORMULAS)}</f>"
    elif shape == 2:
        inner += (
            f'<f t="shared" ref="{ref}:{ref[0]}{row + 5}" si="{rng.randrange(3)}">F{row + 50}+1</f>'
        )
    elif shape == 3:
        inner += f'<f t="shared" si="{rng.randrange(4)}"/>'
    elif shape == 4:
        kind = rng.choice(['t="array" ref="' + ref + '"', 't="dataTable" ref="A1:A2" r1="B1"'])
        inner += f"<f {kind}>{rng.choice(FORMULAS)}</f>"
    if rng.random() < 0.8:
        inner += f"<v>{rng.choice(VALUES[t] if t != 'inlineStr' else ['3'])}</v>"
    if t == "inlineStr" or rng.random() < 0.05:
        inner += f"<is><t>{rng.choice(['label', '', 'x y'])}</t></is>"
    return f"<c{attributes}>{inner}</c>" if inner or rng.random() < 0.5 else f"<c{attributes}/>"


def _sheet(rng: random.Random) -> str:
    rows = []
    for row in range(1, rng.randint(2, 40)):
        columns = sorted(rng.sample("ABCDEF", rng.randint(0, 4)))
        if rng.random() < 0.3:  # a plain row: numbers and shared strings only
            cells = "".join(f'<c r="{c}{row}"><v>{rng.randint(0, 99)}.5</v></c>' for c in columns)
        else:
            cells = "".join(_cell(rng, f"{c}{row}", row) for c in columns)
        spans = ' spans="1:6"' if rng.random() < 0.5 else ""
        rows.append(f'<row r="{row}"{spans}>{cells}</row>')
    return sheet_xml("".join(rows))


def test_generated_cells_of_every_shape_read_as_the_lxml_reader_reads_them(
    tmp_path: Path,
) -> None:
    kinds: Counter[str] = Counter()
    for seed in range(60):
        rng = random.Random(seed)
        parts = package_parts({"S": _sheet(rng), "T": _sheet(rng)}, ["zero", "one"], STYLES)
        path = write_package(tmp_path / f"shapes{seed}.xlsx", parts)
        before = Counter(scan.FALLBACKS)
        fast = read_workbook(path, engine="stream")
        assert scan.FALLBACKS - before == Counter(), seed  # the scanner read every part
        slow = read_workbook(path, engine="lxml")
        assert isinstance(fast, Workbook) and isinstance(slow, Workbook)
        assert workbook_differences(slow, fast) == [], seed
        assert index_differences(fast) == [], seed
        for sheet in fast.sheets.values():
            for cell in sheet.cells.values():
                kinds[type(cell.value).__name__ + ("=" if cell.formula else "")] += 1
    # Every kind of value was met, with and without a formula.
    assert {"int", "float", "str", "bool", "ErrorValue", "int=", "float=", "str="} <= set(kinds)


def test_odd_markup_is_found_where_a_search_for_each_finds_it() -> None:
    """The scanner's search for what it leaves to lxml (a CDATA end, a namespace declaration,
    U+FFFE/U+FFFF outside ASCII blocks) against one plain search per marker, on generated text
    and ranges."""
    rng = random.Random(3)
    pieces = ["<c r=\"A1\">", "<v>1</v>", "]", "]]", "]]>", "] ]>", "xmlns", "xmln", "s", "x",
              "\ufffe", "\uffff", "\u00e9", "</row>"]  # fmt: skip
    found = Counter()
    for _ in range(3000):
        text = "".join(rng.choice(pieces) for _ in range(rng.randint(0, 12)))
        start = rng.randint(0, len(text))
        stop = rng.randint(start, len(text))
        ascii = text.isascii()
        markers = ["]]>", "xmlns"] + ([] if ascii else ["\ufffe", "\uffff"])
        expected = any(text.find(marker, start, stop) >= 0 for marker in markers)
        assert scan._odd(text, start, stop, ascii) == expected, (text, start, stop)
        found[expected] += 1
    assert found[True] > 300 and found[False] > 300


def test_a_sheet_data_end_before_a_later_row_reads_as_the_lxml_reader_reads_it(
    tmp_path: Path,
) -> None:
    """Two sheetData elements (well-formed XML, not a valid worksheet): the lxml reader reads the
    rows of both; the scanner hands the part to it rather than stop at the first end."""
    rows = '<row r="{0}"><c r="A{0}"><v>{0}</v></c></row>'
    sheet = sheet_xml(rows.format(1)).replace(
        "</sheetData>", f"</sheetData><sheetData>{rows.format(2)}</sheetData>"
    )
    path = write_package(tmp_path / "twice.xlsx", package_parts({"S": sheet}, ["zero"]))
    fast = read_workbook(path, engine="stream")
    slow = read_workbook(path, engine="lxml")
    assert workbook_differences(slow, fast) == []
    assert sorted(fast.sheets["S"].cells) == [(1, 1), (2, 1)]


def test_a_read_workbook_is_freed_when_let_go_without_the_cyclic_collector() -> None:
    """Reading leaves no reference cycle that holds the cells (a sheet's reader and its cell
    maker used to refer to each other): with the collector off, a workbook's sheets are freed as
    soon as the workbook is let go. Every fixture, both readers."""
    import gc
    import weakref

    paths = sorted((Path(__file__).resolve().parents[2] / "fixtures").rglob("*.xlsx"))
    assert len(paths) > 20
    enabled = gc.isenabled()
    gc.disable()
    try:
        for path in paths:
            for engine in ("stream", "lxml"):
                try:
                    workbook = read_workbook(path, engine=engine)
                except Exception:  # the damaged fixtures: refused with a message elsewhere
                    continue
                sheets = [weakref.ref(sheet) for sheet in workbook.sheets.values()]
                del workbook
                assert all(sheet() is None for sheet in sheets), (path.name, engine)
    finally:
        if enabled:
            gc.enable()
