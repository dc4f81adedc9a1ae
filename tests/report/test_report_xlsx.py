"""audit.xlsx read back with openpyxl (the outside reader): sheets, rows, tables, links, legend,
reproducible bytes; over the hand-built sample result. Detail sheets: test_report_xlsx_detail."""

from __future__ import annotations

import io
import zipfile
from datetime import datetime
from pathlib import Path

import openpyxl
import pytest
from test_report_sample import AUDITED_PATH, UNREADABLE_ERROR, UNREADABLE_PATH, sample_result
from test_report_xlsx_support import chart_formulas

from auditor.model import AuditResult
from auditor.report.xlsx.style import MISMATCH_FILL, PALETTE, VERDICT_PALETTE
from auditor.report.xlsx.workbook import XlsxReporter, created_date


def _bytes(result: AuditResult) -> bytes:
    handle = io.BytesIO()
    XlsxReporter().write(result, handle)
    return handle.getvalue()


@pytest.fixture(scope="module")
def book() -> openpyxl.Workbook:
    return openpyxl.load_workbook(io.BytesIO(_bytes(sample_result())))


def _rows(sheet) -> list[dict[str, object]]:
    values = list(sheet.iter_rows(values_only=True))
    header = values[0]
    return [dict(zip(header, row, strict=True)) for row in values[1:]]


def test_overview_then_tables_then_one_detail_sheet_per_regression(
    book: openpyxl.Workbook,
) -> None:
    assert book.sheetnames == ["Overview", "Regressions", "Findings", "R01 calib-1", "R02 drift-1"]
    assert book.active.title == "Overview"


def test_every_finding_is_a_row_most_severe_first(book: openpyxl.Workbook) -> None:
    rows = _rows(book["Findings"])
    assert [row["severity"] for row in rows] == ["critical", "major", "minor", "info"]
    assert [row["check"] for row in rows] == [
        "p-value-tails",
        "formula-range",
        "constant-in-formula",
        "workbook-context",
    ]
    assert [row["regression"] for row in rows] == ["calib-1", "calib-1", "drift-1", None]
    # The tables show paths below the folder all workbooks share; the detail sheets the full path.
    assert {row["workbook"] for row in rows} == {"calibration-2024.xlsx"}
    major = rows[1]
    assert major["kind"] == "range-short"
    assert major["cells"].startswith("=HYPERLINK(") and "Calib!F4, Calib!A2:A9" in major["cells"]
    assert major["fix"] == "Extend both ranges to row 9."
    assert rows[3]["kind"] is None and rows[3]["evidence"] is None
    assert rows[3]["cells"] is None and rows[3]["decision"] == "open"


def test_formula_like_text_stays_text(book: openpyxl.Workbook) -> None:
    # A message that starts with "=" must not become a live formula in the reviewer's workbook.
    cell = book["Findings"]["D3"]  # the message column
    assert cell.value == "=SLOPE(B2:B8,A2:A8) leaves out row 9 of the data table."
    assert cell.data_type == "s"


def test_evidence_reads_as_words(book: openpyxl.Workbook) -> None:
    critical = _rows(book["Findings"])[0]
    # NaN has no place in a cell, and an absent figure says nothing: it is left out.
    assert critical["evidence"] == "reported: 0.0213; two tailed: 0.0426; alpha: 0.01"
    major = _rows(book["Findings"])[1]
    assert major["evidence"] == "formula rows: 2, 8; table rows: 2, 9"  # words, not JSON


def test_links_open_the_detail_sheet_and_the_source_cell(book: openpyxl.Workbook) -> None:
    sheet = book["Regressions"]
    header = [cell.value for cell in sheet[1]]
    detail = sheet.cell(row=2, column=header.index("detail sheet") + 1)
    assert detail.value == "R01 calib-1"
    assert detail.hyperlink.location == "'R01 calib-1'!A1"
    source = sheet.cell(row=2, column=header.index("source cell") + 1).value
    # The anchor is the reported slope's cell, in the audited file given by its absolute path.
    target = (Path.cwd() / AUDITED_PATH).resolve().as_uri()
    assert source == f'=HYPERLINK("{target}#\'Calib\'!F4","Calib!F4")'
    findings = book["Findings"]
    regression_links = [c.hyperlink.location for c in findings["J"][1:] if c.hyperlink]
    assert regression_links == ["'R01 calib-1'!A1", "'R01 calib-1'!A1", "'R02 drift-1'!A1"]


def test_every_regression_is_a_row(book: openpyxl.Workbook) -> None:
    rows = _rows(book["Regressions"])
    assert [row["regression"] for row in rows] == ["calib-1", "drift-1"]
    calib, drift = rows
    assert calib["workbook"] == "calibration-2024.xlsx" and calib["sheet"] == "Calib"
    assert calib["x range"] == "Calib!A2:A9" and calib["found by"] == "formulas"
    assert calib["n"] == 8 and calib["x columns"] == 1
    assert calib["p reported"] == pytest.approx(0.0213)
    assert calib["p intended"] == pytest.approx(0.0426)
    assert calib["verdict"] == "mismatch"
    assert calib["worst severity"] == "critical" and calib["findings"] == 2
    assert drift["p reported"] == "<0.001"
    assert drift["SE reported"] is None and drift["SE intended"] == pytest.approx(1.5e-06)
    assert drift["worst severity"] == "minor" and drift["findings"] == 1


def test_mismatched_reported_value_is_highlighted(book: openpyxl.Workbook) -> None:
    sheet = book["Regressions"]
    header = [cell.value for cell in sheet[1]]
    p_reported = sheet.cell(row=2, column=header.index("p reported") + 1)
    slope_reported = sheet.cell(row=2, column=header.index("slope reported") + 1)
    assert p_reported.font.bold and not slope_reported.font.bold


def test_tables_with_filters_and_frozen_headers(book: openpyxl.Workbook) -> None:
    findings, regressions = book["Findings"], book["Regressions"]
    assert findings.tables["FindingsTable"].ref == "A1:M5"
    assert regressions.tables["RegressionsTable"].ref == "A1:U3"
    # Printed: the columns a reviewer signs off on, workbook to findings; titles on every page.
    assert regressions.print_area == "'Regressions'!$A$1:$N$3"
    assert regressions.print_title_rows == "$1:$1" and findings.print_title_rows == "$1:$1"
    assert regressions.page_setup.orientation == "landscape"
    # Fit to one page wide (1 is the file format's default, so not written), as tall as needed.
    assert regressions.sheet_properties.pageSetUpPr.fitToPage
    assert (
        regressions.page_setup.fitToWidth in (None, 1) and regressions.page_setup.fitToHeight == 0
    )
    assert findings.tables["FindingsTable"].autoFilter is not None
    assert regressions.tables["RegressionsTable"].autoFilter is not None
    # Regressions keeps the workbook and id in view while scrolling right.
    assert findings.freeze_panes == "A2" and regressions.freeze_panes == "C2"
    assert findings.column_dimensions["D"].width > findings.column_dimensions["A"].width
    assert findings["D2"].alignment.wrap_text
    # Printed: severity to decision; the filter and link columns stay on screen.
    assert findings.print_area == "'Findings'!$A$1:$G$5"


def _overview_text(book: openpyxl.Workbook) -> list[tuple[object, object]]:
    return [(row[0], row[1]) for row in book["Overview"].iter_rows(values_only=True)]


def test_overview_lists_what_was_audited(book: openpyxl.Workbook) -> None:
    rows = _overview_text(book)
    assert ("Tool", "regaudit 0.1.0") in rows
    assert ("Policy", "calibration") in rows
    assert ("Date", "2024-05-06T07:08:09Z") in rows
    assert ("Inputs", "lab") in rows
    assert ("audited", 1) in rows and ("unreadable", 1) in rows and ("no-regressions", 0) in rows
    assert ("critical", 1) in rows and ("info", 1) in rows
    assert (UNREADABLE_PATH, f"could not be read: {UNREADABLE_ERROR}") in rows
    assert ("confirmed", 1) in rows and ("mismatch", 1) in rows  # regressions by verdict
    caution = next(label for label, _ in rows if str(label).startswith("Caution: "))
    assert "licensed professional practice decide" in caution


@pytest.mark.parametrize(
    ("title", "palette"), [("Severity legend", PALETTE), ("Verdict legend", VERDICT_PALETTE)]
)
def test_legend_colours_always_carry_the_word(
    book: openpyxl.Workbook, title: str, palette: dict[str, tuple[str, str]]
) -> None:
    sheet = book["Overview"]
    legend_start = next(c.row for c in sheet["A"] if c.value == title)
    for offset, word in enumerate(palette, start=1):
        cell = sheet.cell(row=legend_start + offset, column=1)
        assert cell.value == word
        text_colour, fill_colour = palette[word]
        assert cell.font.color.rgb == "FF" + text_colour.lstrip("#")
        assert cell.fill.fgColor.rgb == "FF" + fill_colour.lstrip("#")


def test_every_coloured_cell_holds_its_word(book: openpyxl.Workbook) -> None:
    fills = {"FF" + fill.lstrip("#"): word for word, (_, fill) in PALETTE.items()}
    fills |= {"FF" + fill.lstrip("#"): word for word, (_, fill) in VERDICT_PALETTE.items()}
    fills.pop("FF" + MISMATCH_FILL.lstrip("#"))  # also shades a disagreeing reported number
    checked = 0
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                word = fills.get(cell.fill.fgColor.rgb) if cell.fill.fill_type else None
                if word:
                    assert cell.value == word, f"{sheet.title}!{cell.coordinate}"
                    checked += 1
    assert checked > 10


def test_same_result_gives_identical_bytes() -> None:
    first, second = _bytes(sample_result()), _bytes(sample_result())
    assert first == second
    with zipfile.ZipFile(io.BytesIO(first)) as archive:
        core = archive.read("docProps/core.xml").decode()
    assert '<dcterms:created xsi:type="dcterms:W3CDTF">2024-05-06T07:08:09Z' in core


def test_the_date_comes_from_the_result() -> None:
    later = sample_result()
    later.generated = "2024-05-07"
    assert _bytes(later) != _bytes(sample_result())


@pytest.mark.parametrize(
    ("generated", "expected"),
    [
        ("2024-05-06T07:08:09Z", datetime(2024, 5, 6, 7, 8, 9)),
        ("2024-05-06T09:08:09+02:00", datetime(2024, 5, 6, 7, 8, 9)),
        ("2024-05-06", datetime(2024, 5, 6)),
        ("", datetime(2000, 1, 1)),
        ("yesterday", datetime(2000, 1, 1)),
    ],
)
def test_created_date(generated: str, expected: datetime) -> None:
    assert created_date(generated) == expected


def test_empty_result_still_gives_tables() -> None:
    empty = AuditResult(version="0.1.0", policy="general", workbooks=[])
    book = openpyxl.load_workbook(io.BytesIO(_bytes(empty)))
    assert book["Findings"].tables["FindingsTable"].ref == "A1:M2"
    assert book.sheetnames == ["Overview", "Regressions", "Findings"]
    assert _bytes(empty) == _bytes(empty)


def test_non_finite_values_become_empty_cells() -> None:
    result = sample_result()
    regression = result.workbooks[0].regressions[0]
    regression.intended["slope"] = float("nan")
    regression.reported["slope"].value = float("inf")
    regression.reported["slope"].intended = float("nan")
    book = openpyxl.load_workbook(io.BytesIO(_bytes(result)))
    calib = _rows(book["Regressions"])[0]
    assert calib["slope reported"] is None and calib["slope intended"] is None


def test_a_detail_sheet_without_data_has_no_charts_and_says_so() -> None:
    # The sample carries no data points: nothing to chart, nothing for a formula to read.
    data = _bytes(sample_result())
    assert chart_formulas(data)["R01 calib-1"] == []
    sheet = openpyxl.load_workbook(io.BytesIO(data))["R01 calib-1"]
    column_a = [cell.value for cell in sheet["A"]]
    start = column_a.index("Recomputed here")
    assert column_a[start + 3] == "no statistic could be recomputed (the fit is undefined)"
    formulas = [c.value for row in sheet.iter_rows() for c in row if c.data_type == "f"]
    assert all(formula.startswith("=HYPERLINK(") for formula in formulas)
    # The author's formula is text in the statistics table, never a live formula.
    texts = [c for row in sheet.iter_rows() for c in row if c.value == "=SLOPE(B2:B8,A2:A8)"]
    assert [c.data_type for c in texts] == ["s"]


def test_every_design_metric_is_shown_whatever_its_name_or_shape() -> None:
    result = sample_result()
    design = result.workbooks[0].regressions[0].design
    design["needed"] = {"sxx": 412.0, "points": 8}  # a metric another module may add later
    design["advice"] = "8 points evenly spaced over 10-40"
    sheet = openpyxl.load_workbook(io.BytesIO(_bytes(result)))["R01 calib-1"]
    column_a = [cell.value for cell in sheet["A"]]
    start = column_a.index("Design of x") + 2
    rows = {
        sheet.cell(row, 1).value: sheet.cell(row, 2).value
        for row in range(start + 1, start + 1 + len(design))
    }
    assert rows == {
        "Sxx (spread of x)": 42,
        "smallest x": 1,
        "largest x": 8,
        "distinct x levels": 8,
        "largest leverage": "—",  # infinity has no place in a cell
        "needed": '{"sxx": 412.0, "points": 8}',
        "advice": "8 points evenly spaced over 10-40",
    }
