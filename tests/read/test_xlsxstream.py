"""The one-pass reader against an outside reading of the same files.

Reference: openpyxl's own normal load (formulas, then stored values), kept as the "openpyxl"
engine of read_workbook. On every fixture (saved by LibreOffice) both must give the same cells,
stored values and their types, formulas, number formats, defined names and array blocks. A
hand-written package covers what LibreOffice never writes (shared formulas, inline and rich
strings, merged cells, reserved names); its expected values are written out here by hand from
ECMA-376, and openpyxl must agree with them too.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from package_builders import package_parts, sheet_xml, write_package

from auditor.read.open import read_workbook
from auditor.read.workbook import ErrorValue, Workbook

ROOT = Path(__file__).resolve().parents[2]
FIXTURES = sorted((ROOT / "fixtures" / "workbooks").glob("*.xlsx")) + sorted(
    (ROOT / "fixtures" / "edge").glob("*.xlsx")
)


def _differences(reference: Workbook, candidate: Workbook) -> list[str]:
    found: list[str] = []
    if list(reference.sheets) != list(candidate.sheets):
        found.append(f"sheets {list(reference.sheets)} vs {list(candidate.sheets)}")
    for name, sheet in reference.sheets.items():
        other = candidate.sheets.get(name)
        if other is None:
            continue
        if (sheet.max_row, sheet.max_col) != (other.max_row, other.max_col):
            found.append(
                f"{name}: extent {sheet.max_row, sheet.max_col} vs {other.max_row, other.max_col}"
            )
        for key in sorted(set(sheet.cells) | set(other.cells)):
            a, b = sheet.cells.get(key), other.cells.get(key)
            if a != b or (a is not None and b is not None and type(a.value) is not type(b.value)):
                found.append(f"{name}!{key}: {a!r} vs {b!r}")
    if reference.names != candidate.names:
        found.append(f"names {reference.names} vs {candidate.names}")
    if reference.array_anchors != candidate.array_anchors:
        found.append("array blocks differ")
    if reference.stored_values != candidate.stored_values:
        found.append(f"stored_values {reference.stored_values} vs {candidate.stored_values}")
    if reference.sha256 != candidate.sha256:
        found.append("sha256 differs")
    return found


@pytest.mark.parametrize("path", FIXTURES, ids=lambda p: p.name)
def test_fixture_reads_the_same_as_openpyxl(path: Path) -> None:
    assert _differences(read_workbook(path, engine="openpyxl"), read_workbook(path)) == []


def test_the_fixtures_exercise_what_the_comparison_relies_on() -> None:
    """Guards the comparison above against passing on fixtures that hold nothing hard."""
    seen: set[str] = set()
    for path in FIXTURES:
        workbook = read_workbook(path)
        seen.add("stored" if workbook.stored_values else "no-stored-values")
        seen.update("sheet-name" if n.scope else "book-name" for n in workbook.names)
        if workbook.array_anchors:
            seen.add("array")
        for cell in (c for s in workbook.sheets.values() for c in s.cells.values()):
            if cell.number_format != "General":
                seen.add("format")
            seen.add(("formula-" if cell.formula else "constant-") + type(cell.value).__name__)
    wanted = {
        "stored", "no-stored-values", "sheet-name", "book-name", "array", "format",
        "formula-float", "formula-ErrorValue", "formula-str", "constant-str", "constant-int",
        "constant-float",
    }  # fmt: skip
    assert wanted <= seen, f"no fixture has {sorted(wanted - seen)}"


STYLES = (
    '<numFmts count="2"><numFmt numFmtId="164" formatCode="0.000"/>'
    '<numFmt numFmtId="165" formatCode="[h]:mm:ss"/></numFmts>'
    '<fonts count="1"><font/></fonts><fills count="1"><fill><patternFill/></fill></fills>'
    '<borders count="1"><border/></borders><cellStyleXfs count="1"><xf/></cellStyleXfs>'
    '<cellXfs count="5"><xf numFmtId="0"/><xf numFmtId="164"/><xf numFmtId="10"/>'
    '<xf numFmtId="14"/><xf numFmtId="165"/></cellXfs>'
)
STRINGS = ["Concentration", "<si><r><t>Abs</t></r><r><rPr><b/></rPr><t>orbance</t></r></si>", "ok"]
X = [1, 2, 3, 4, 5, 6, 7, 8]
Y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8, 16.1]


def _data_rows() -> str:
    rows = [
        '<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c>'
        '<c r="D1" t="inlineStr"><is><t>note</t></is></c>'
        '<c r="M1" t="s"><v>2</v></c><c r="N1"><v>99</v></c></row>'
    ]
    for i, (x, y) in enumerate(zip(X, Y, strict=True)):
        r = i + 2
        shared = (
            '<f t="shared" si="0" ref="E2:E9">A2*2+$B$2</f>' if r == 2 else '<f t="shared" si="0"/>'
        )
        extra = ""
        if r == 2:
            extra = (
                '<c r="F2" s="1"><f t="shared" si="1" ref="F2:H2">SUM(A$2:A2)</f><v>1</v></c>'
                '<c r="G2" s="1"><f t="shared" si="1"/><v>2.1</v></c>'
                '<c r="H2" s="1"><f t="shared" si="1"/><v>0</v></c>'
                '<c r="J2" s="2"><f t="array" ref="J2:K3">LINEST(B2:B9,A2:A9)</f><v>1.98</v></c>'
                '<c r="K2" s="2"><v>0.05</v></c>'
            )
        elif r == 3:
            extra = (
                '<c r="J3"><v>0.04</v></c><c r="K3" t="e"><v>#N/A</v></c>'
                '<c r="L3" t="str"><f>IF(A3&gt;1,"big","small")</f><v>big</v></c>'
            )
        elif r == 4:
            extra = (
                '<c r="J4" t="b"><v>1</v></c><c r="K4" s="3"><v>45000.25</v></c>'
                '<c r="L4" t="e"><f>1/0</f><v>#DIV/0!</v></c>'
            )
        rows.append(
            f'<row r="{r}"><c r="A{r}"><v>{x}</v></c><c r="B{r}" s="1"><v>{y}</v></c>'
            f'<c r="E{r}">{shared}<v>{x * 2 + Y[0]}</v></c>{extra}</row>'
        )
    return "".join(rows)


NAMES = (
    "<definedNames>"
    '<definedName name="_xlnm._FilterDatabase" hidden="1">Data!$A$1:$B$9</definedName>'
    '<definedName name="_xlnm.Print_Area" localSheetId="0">Data!$A$1:$K$9</definedName>'
    '<definedName name="calib_x">Data!$A$2:$A$9</definedName>'
    '<definedName name="calib_y" localSheetId="0">Data!$B$2:$B$9</definedName>'
    "</definedNames>"
)


@pytest.fixture(scope="module")
def crafted(tmp_path_factory: pytest.TempPathFactory) -> Path:
    sheet = sheet_xml(_data_rows(), '<mergeCells count="1"><mergeCell ref="M1:N1"/></mergeCells>')
    parts = package_parts({"Data": sheet}, STRINGS, STYLES, NAMES)
    return write_package(tmp_path_factory.mktemp("crafted") / "crafted.xlsx", parts)


def test_shared_formulas_are_expanded_down_and_across(crafted: Path) -> None:
    sheet = read_workbook(crafted).sheets["Data"]
    # Relative references move with the cell, absolute ones stay (ECMA-376 18.17.2.1).
    expected_down = {r: f"=A{r}*2+$B$2" for r in range(2, 10)}
    assert {r: sheet.cells[(r, 5)].formula for r in range(2, 10)} == expected_down
    assert [sheet.cells[(2, c)].formula for c in (6, 7, 8)] == [
        "=SUM(A$2:A2)",
        "=SUM(B$2:B2)",
        "=SUM(C$2:C2)",
    ]
    assert sheet.cells[(9, 5)].value == 8 * 2 + 2.1  # the stored value read from <v>


def test_crafted_cells_hold_what_the_xml_says(crafted: Path) -> None:
    workbook = read_workbook(crafted)
    sheet = workbook.sheets["Data"]
    value = {(r, c): cell.value for (r, c), cell in sheet.cells.items()}
    assert value[(1, 1)] == "Concentration"
    assert value[(1, 2)] == "Absorbance"  # rich text runs joined
    assert value[(1, 4)] == "note"  # inline string
    assert (1, 14) not in sheet.cells  # N1 lies under the merge M1:N1: dropped
    assert value[(2, 1)] == 1 and type(value[(2, 1)]) is int
    assert value[(3, 11)] == ErrorValue("#N/A")
    assert value[(3, 12)] == "big" and sheet.cells[(3, 12)].formula == '=IF(A3>1,"big","small")'
    assert value[(4, 10)] is True
    assert value[(4, 12)] == ErrorValue("#DIV/0!")
    assert value[(4, 11)] == 45000.25  # a date cell keeps its serial number
    formats = {(r, c): cell.number_format for (r, c), cell in sheet.cells.items()}
    assert formats[(2, 2)] == "0.000" and formats[(2, 10)] == "0.00%"
    assert formats[(4, 11)] == "mm-dd-yy" and formats[(2, 1)] == "General"
    assert sheet.cells[(2, 10)].array_ref == "J2:K3"
    assert workbook.array_anchors[("Data", 3, 11)] == (2, 10, 3, 11)
    assert [(n.name, n.refers_to, n.scope) for n in workbook.names] == [
        ("calib_y", "Data!$B$2:$B$9", "Data"),
        ("calib_x", "Data!$A$2:$A$9", None),
    ]
    assert (sheet.max_row, sheet.max_col) == (9, 13)


def test_crafted_workbook_reads_the_same_as_openpyxl(crafted: Path) -> None:
    assert _differences(read_workbook(crafted, engine="openpyxl"), read_workbook(crafted)) == []


def test_a_duration_keeps_its_serial_number(tmp_path: Path) -> None:
    """openpyxl turns a [h]:mm:ss cell into a timedelta (text, once converted); the spreadsheet
    and regaudit see the number 1.5 (36 hours)."""
    sheet = sheet_xml('<row r="1"><c r="A1" s="4"><v>1.5</v></c></row>')
    path = write_package(tmp_path / "duration.xlsx", package_parts({"S": sheet}, None, STYLES))
    cell = read_workbook(path).sheets["S"].cells[(1, 1)]
    assert (cell.value, cell.number_format) == (1.5, "[h]:mm:ss")


def test_cells_without_references_follow_their_neighbours(tmp_path: Path) -> None:
    """ECMA-376 allows <c> and <row> without r: they take the next column and row."""
    sheet = sheet_xml(
        '<row><c><v>1</v></c><c><v>2</v></c></row><row><c r="C2"><v>3</v></c><c><v>4</v></c></row>'
    )
    path = write_package(tmp_path / "norefs.xlsx", package_parts({"S": sheet}))
    cells = read_workbook(path).sheets["S"].cells
    assert {k: c.value for k, c in cells.items()} == {(1, 1): 1, (1, 2): 2, (2, 3): 3, (2, 4): 4}
    assert _differences(read_workbook(path, engine="openpyxl"), read_workbook(path)) == []


def test_inside_a_frozen_run_a_workbook_read_is_frozen_freed_when_dropped_and_leaves_no_cycles(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Inside a run that freezes its long-lived objects the reader freezes the workbook too (the
    collector then leaves the cells alone): it must still be freed as soon as it is dropped, and
    the reference cycles the reading made must be collected before the freeze, not kept for
    ever. Outside such a run, or for a small workbook, the reader freezes nothing."""
    import gc
    import weakref

    from auditor.pipeline.collector import frozen
    from auditor.read import stream

    monkeypatch.setattr(stream, "SETTLE_CELLS", 10)  # the workbook below counts as large
    rows = "".join(f'<row r="{r}"><c r="A{r}"><v>{r}</v></c></row>' for r in range(1, 50))
    path = write_package(tmp_path / "freed.xlsx", package_parts({"S": sheet_xml(rows)}))
    gc.unfreeze()  # whatever earlier tests froze: not this test's to judge
    gc.collect()
    read_workbook(path)
    assert gc.get_freeze_count() == 0
    gc.collect()  # that reading's cycles: frozen() would keep them until it ends
    with frozen():
        before = gc.get_freeze_count()
        monkeypatch.setattr(stream, "SETTLE_CELLS", 50)
        read_workbook(path)
        assert gc.get_freeze_count() == before  # 49 cells: small
        monkeypatch.setattr(stream, "SETTLE_CELLS", 10)
        gc.collect()
        book = read_workbook(path)
        assert gc.get_freeze_count() > before + 49  # the cells among what was frozen
        sheet = weakref.ref(book.sheets["S"])
        gc.unfreeze()  # what was frozen goes back to the collector's care: none of it is garbage
        assert gc.collect() == 0
        del book
        assert sheet() is None
