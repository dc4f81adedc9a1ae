"""Annotated copies, read back with openpyxl: the source is untouched (SHA-256), every flagged cell
carries a note with the message and the fix, the first sheet says what the copy may have lost
(detected from the package's parts), and a copy never overwrites an audited file."""

from __future__ import annotations

import hashlib
import io
import shutil
import struct
import zipfile
import zlib
from pathlib import Path

import openpyxl
import pytest
import xlsxwriter
from test_report_xlsx_support import xlsx_bytes

from auditor.errors import UsageError
from auditor.model import AuditResult, Finding, RegressionResult, WorkbookResult
from auditor.report.xlsx.style import PALETTE
from auditor.report.xlsx.workbook import XlsxReporter
from auditor.review.annotate import annotate_copies, copy_targets, lossy_content


def _png() -> bytes:
    """A 1×1 white PNG, built by hand (signature, IHDR, IDAT, IEND)."""

    def chunk(kind: bytes, body: bytes) -> bytes:
        crc = zlib.crc32(kind + body) & 0xFFFFFFFF
        return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", crc)

    header = struct.pack(">IIBBBBB", 1, 1, 8, 2, 0, 0, 0)
    pixels = zlib.compress(b"\x00\xff\xff\xff")
    return (
        b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) + chunk(b"IDAT", pixels) + chunk(b"IEND", b"")
    )


def make_source(path: Path) -> Path:
    """A small workbook with data, a chart, an image and an author's own note."""
    book = xlsxwriter.Workbook(path)
    data = book.add_worksheet("Data")
    data.write_row(0, 0, ["x", "y"])
    for row, (x, y) in enumerate([(1, 2.1), (2, 3.9), (3, 6.2)], start=1):
        data.write_row(row, 0, [x, y])
    data.write_comment("A1", "Author: x in mg/L")
    data.insert_image("D2", "dot.png", {"image_data": io.BytesIO(_png())})
    chart = book.add_chart({"type": "scatter"})
    chart.add_series({"categories": "=Data!$A$2:$A$4", "values": "=Data!$B$2:$B$4"})
    data.insert_chart("D8", chart)
    results = book.add_worksheet("My Sheet")
    results.write("E5", 1.98)
    results.write_formula("E6", "=SLOPE(Data!B2:B4,Data!A2:A4)", None, 2.05)
    book.close()
    return path


FINDINGS = [
    Finding(
        "stat-recompute",
        "major",
        "The reported slope is 1.98, but the 3 points give 2.05.",
        cells=["My Sheet!E5"],
        fix="Recompute My Sheet!E5 from the data table.",
    ),
    Finding(
        "rows-outside-range",
        "critical",
        "The formulas leave out row 4.",
        kind="range-short",
        cells=["Data!B2:B4", "My Sheet!E5"],
        fix="Extend the ranges to row 4.",
    ),
    Finding("x-header", "minor", "The x column's unit note is ambiguous.", cells=["Data!A1"]),
]
HOMELESS = Finding("no-stored-values", "info", "The file carries no stored values.")


def result_for(paths: list[Path], findings: bool = True) -> AuditResult:
    workbooks = []
    for path in paths:
        regression = RegressionResult(
            id="My Sheet/E5",
            sheet="My Sheet",
            x_range="Data!A2:A4",
            y_range="Data!B2:B4",
            found_by="formulas",
            n=3,
            intercept=True,
            findings=list(FINDINGS) if findings else [],
        )
        workbooks.append(
            WorkbookResult(
                path=str(path),
                sha256=hashlib.sha256(path.read_bytes()).hexdigest(),
                status="audited",
                regressions=[regression],
                findings=[HOMELESS] if findings else [],
            )
        )
    return AuditResult("0.1.0", "general", workbooks, generated="2025-02-03T04:05:06Z")


@pytest.fixture()
def source(tmp_path: Path) -> Path:
    folder = tmp_path / "in"
    folder.mkdir()
    return make_source(folder / "lab.xlsx")


def test_source_unchanged_and_every_flagged_cell_has_a_note(source: Path, tmp_path: Path) -> None:
    before = hashlib.sha256(source.read_bytes()).hexdigest()
    copies = annotate_copies(result_for([source]), tmp_path / "out", [source])
    assert hashlib.sha256(source.read_bytes()).hexdigest() == before  # the original is untouched
    assert [Path(c.copy).name for c in copies] == ["lab.audited.xlsx"]
    book = openpyxl.load_workbook(copies[0].copy)
    note_e5 = book["My Sheet"]["E5"].comment.text
    assert "The reported slope is 1.98" in note_e5 and "Fix: Recompute My Sheet!E5" in note_e5
    assert "The formulas leave out row 4." in note_e5  # both findings naming E5, worst first
    assert note_e5.index("[critical]") < note_e5.index("[major]")
    assert "Fix: Extend the ranges to row 4." in book["Data"]["B2"].comment.text  # range: top-left
    assert book["Data"]["B3"].comment is None
    fill = "FF" + PALETTE["critical"][1].lstrip("#")
    assert [book["Data"][f"B{row}"].fill.fgColor.rgb for row in (2, 3, 4)] == [fill] * 3
    assert book["My Sheet"]["E5"].fill.fgColor.rgb == fill
    assert book["My Sheet"]["E6"].comment is None  # not flagged
    assert copies[0].notes == 3  # My Sheet!E5, Data!B2, Data!A1
    assert book.calculation.fullCalcOnLoad


def test_the_first_sheet_says_what_the_copy_may_lose(source: Path, tmp_path: Path) -> None:
    (copy,) = annotate_copies(result_for([source]), tmp_path / "out", [source])
    assert {"1 chart", "1 image"} <= set(copy.may_lose)
    note = openpyxl.load_workbook(copy.copy)["Data"]["A1"].comment.text
    assert note.startswith("Author: x in mg/L")  # the author's own note is kept, first
    assert "Annotated copy made by regaudit 0.1.0" in note and str(source) in note
    assert "1 chart, 1 image" in note
    assert "The file carries no stored values." in note  # the finding without a cell
    assert "The x column's unit note is ambiguous." in note  # A1's own finding


def test_the_overview_lists_the_copies_and_their_caveat(source: Path, tmp_path: Path) -> None:
    result = result_for([source])
    copies = annotate_copies(result, tmp_path / "out", [source])
    overview = openpyxl.load_workbook(io.BytesIO(xlsx_bytes(result, XlsxReporter(copies))))
    rows = {row[0]: row[1] for row in overview["Overview"].iter_rows(values_only=True)}
    assert "Annotated copies" in rows and rows["Folder"] == str(tmp_path / "out")
    text = rows["Copies"]
    assert text.startswith(f"lab.audited.xlsx: copy of {source}, notes on 3 cell(s).")
    assert "may lose or simplify 1 chart, 1 image" in text


def test_a_copy_that_would_overwrite_an_input_is_refused(source: Path, tmp_path: Path) -> None:
    out = tmp_path / "out"
    out.mkdir()
    earlier = out / "lab.audited.xlsx"  # a previous copy, now itself among the audited files
    shutil.copyfile(source, earlier)
    digest = hashlib.sha256(earlier.read_bytes()).hexdigest()
    with pytest.raises(UsageError, match="refusing to write"):
        annotate_copies(result_for([source]), out, [source, earlier])
    assert hashlib.sha256(earlier.read_bytes()).hexdigest() == digest
    assert sorted(p.name for p in out.iterdir()) == ["lab.audited.xlsx"]


def test_only_workbooks_with_findings_get_a_copy_and_names_stay_unique(tmp_path: Path) -> None:
    for folder in "abc":
        (tmp_path / folder).mkdir()
    first = make_source(tmp_path / "a" / "lab.xlsx")
    second = make_source(tmp_path / "b" / "lab.xlsx")
    clean = make_source(tmp_path / "c" / "clean.xlsx")
    result = result_for([first, second])
    result.workbooks += result_for([clean], findings=False).workbooks
    result.workbooks.append(WorkbookResult(str(tmp_path / "x.xlsx"), "", "unreadable", "broken"))
    names = [target.name for _, target in copy_targets(result, tmp_path / "out")]
    assert names == ["lab.audited.xlsx", "lab-2.audited.xlsx"]


def test_pivot_tables_are_found_from_the_part_names(source: Path, tmp_path: Path) -> None:
    with_pivot = tmp_path / "pivot.xlsx"
    with zipfile.ZipFile(source) as original, zipfile.ZipFile(with_pivot, "w") as copy:
        for item in original.infolist():
            copy.writestr(item, original.read(item))
        copy.writestr("xl/pivotTables/pivotTable1.xml", "<pivotTableDefinition/>")
        copy.writestr("xl/pivotTables/pivotTable2.xml", "<pivotTableDefinition/>")
    assert lossy_content(with_pivot) == ["1 chart", "1 image", "2 pivot tables"]


def test_a_workbook_that_cannot_be_copied_does_not_stop_the_others(
    source: Path, tmp_path: Path
) -> None:
    gone = tmp_path / "in" / "gone.xlsx"
    shutil.copyfile(source, gone)
    result = result_for([gone, source])
    gone.unlink()  # moved away between the audit and the copies
    copies = annotate_copies(result, tmp_path / "out", [source])
    assert copies[0].error.startswith("no copy was made: FileNotFoundError")
    assert not Path(copies[0].copy).exists()
    assert copies[1].error == "" and Path(copies[1].copy).is_file()
