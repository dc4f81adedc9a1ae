"""Which regressions get a detail sheet in audit.xlsx: those with a finding by default, every one
with ``--detail all``; the Regressions sheet lists every regression either way."""

from __future__ import annotations

import io

import openpyxl
import pytest
from test_report_xlsx_support import fixture_audit, xlsx_bytes

from auditor.cli.main import build_parser
from auditor.report.xlsx.links import detail_refs
from auditor.report.xlsx.workbook import XlsxReporter


@pytest.fixture(scope="module")
def default_book() -> openpyxl.Workbook:
    return openpyxl.load_workbook(io.BytesIO(xlsx_bytes(fixture_audit(), XlsxReporter())))


def test_a_detail_sheet_for_each_regression_with_a_finding(
    default_book: openpyxl.Workbook,
) -> None:
    result = fixture_audit()
    regressions = [r for w in result.workbooks for r in w.regressions]
    with_findings = [r for r in regressions if r.findings]
    assert 0 < len(with_findings) < len(regressions)  # the fixtures hold both kinds
    details = default_book.sheetnames[3:]
    assert len(details) == len(with_findings)
    expected = [ref.sheet for ref in detail_refs(result) if ref.regression.findings]
    assert details == expected  # numbered as in the full set: R07 is the seventh regression


def test_the_regressions_sheet_still_lists_every_regression(
    default_book: openpyxl.Workbook,
) -> None:
    result = fixture_audit()
    rows = list(default_book["Regressions"].iter_rows(values_only=True))
    header, body = rows[0], rows[1:]
    column = header.index("detail sheet")
    assert len(body) == sum(len(w.regressions) for w in result.workbooks)
    refs = detail_refs(result)
    for row, ref in zip(body, refs, strict=True):
        if ref.regression.findings:
            assert row[column] == ref.sheet
        else:
            assert row[column] == "none (no finding)"


def test_the_findings_sheet_links_only_to_sheets_that_exist(
    default_book: openpyxl.Workbook,
) -> None:
    names = set(default_book.sheetnames)
    links = [
        cell.hyperlink.location
        for row in default_book["Findings"].iter_rows()
        for cell in row
        if cell.hyperlink is not None and cell.hyperlink.location
    ]
    assert links
    for location in links:
        assert location.rsplit("!", 1)[0].strip("'").replace("''", "'") in names


def test_all_gives_every_regression_its_sheet() -> None:
    result = fixture_audit()
    book = openpyxl.load_workbook(io.BytesIO(xlsx_bytes(result, XlsxReporter(detail="all"))))
    assert len(book.sheetnames) == 3 + sum(len(w.regressions) for w in result.workbooks)


def test_the_command_line_takes_the_choice() -> None:
    parser = build_parser()
    assert parser.parse_args(["audit", "x.xlsx"]).detail == "findings"
    assert parser.parse_args(["audit", "x.xlsx", "--detail", "all"]).detail == "all"
    with pytest.raises(SystemExit):
        parser.parse_args(["audit", "x.xlsx", "--detail", "some"])
    with pytest.raises(ValueError, match="detail must be one of"):
        detail_refs(result := fixture_audit(), "some")
    assert len(detail_refs(result, "findings")) == len(detail_refs(result))
