"""LibreOffice recalculates audit.xlsx: every live formula must give the value regaudit stored.

The detail sheets hold SLOPE, INTERCEPT, STEYX, RSQ, CORREL, DEVSQ, LINEST, T.DIST.2T... over the
snapshot's used points, stored with regaudit's own values. LibreOffice (headless, recalculation
on load forced, its own profile folder) opens and saves the file; every formula cell of every
sheet is then compared: numbers to 1e-9 relative, text (agreement checks, link captions) exactly.
This is the outside check of both the formulas (they compute what they claim) and of regaudit's
numbers (an independent engine agrees with them).
"""

from __future__ import annotations

import io
import shutil
from pathlib import Path

import openpyxl
import pytest
from make_fixtures import recalculate as recalculate_with_libreoffice
from test_report_xlsx_support import fixture_audit, xlsx_bytes

RELATIVE = 1e-9

pytestmark = pytest.mark.optional


def recalculate(source: Path, out_dir: Path, profile: Path) -> Path:
    out_dir.mkdir(parents=True, exist_ok=True)
    recalculate_with_libreoffice([source], out_dir, profile)  # the fixtures' own recalculation
    return out_dir / source.name


@pytest.fixture(scope="module")
def books(tmp_path_factory: pytest.TempPathFactory) -> tuple[openpyxl.Workbook, ...]:
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    work = tmp_path_factory.mktemp("lo-recalc")
    source = work / "audit.xlsx"
    data = xlsx_bytes(fixture_audit())
    source.write_bytes(data)
    out = work / "out"
    out.mkdir()
    recalculated = recalculate(source, out, work / "profile")
    formulas = openpyxl.load_workbook(io.BytesIO(data))
    ours = openpyxl.load_workbook(io.BytesIO(data), data_only=True)
    theirs = openpyxl.load_workbook(recalculated, data_only=True)
    return formulas, ours, theirs


def _agree(ours: object, theirs: object) -> bool:
    if isinstance(ours, (int, float)) and isinstance(theirs, (int, float)):
        return abs(ours - theirs) <= RELATIVE * max(abs(ours), abs(theirs))
    return ours == theirs


def test_every_live_formula_recalculates_to_the_stored_value(
    books: tuple[openpyxl.Workbook, ...],
) -> None:
    formulas, ours, theirs = books
    compared, disagreements = 0, []
    for sheet in formulas.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                if not (isinstance(cell.value, str) and cell.value.startswith("=")):
                    continue
                stored = ours[sheet.title][cell.coordinate].value
                recalculated = theirs[sheet.title][cell.coordinate].value
                compared += 1
                if stored is None or not _agree(stored, recalculated):
                    disagreements.append(
                        f"{sheet.title}!{cell.coordinate} {cell.value}: "
                        f"stored {stored!r}, LibreOffice {recalculated!r}"
                    )
    assert disagreements == []
    assert compared > 1000  # every detail sheet has its formulas


def test_every_statistic_function_was_exercised(books: tuple[openpyxl.Workbook, ...]) -> None:
    formulas, _, _ = books
    text = " ".join(
        str(cell.value)
        for sheet in formulas.worksheets[3:]
        for row in sheet.iter_rows()
        for cell in row
        if isinstance(cell.value, str) and cell.value.startswith("=")
    )
    for function in ("SLOPE(", "INTERCEPT(", "STEYX(", "RSQ(", "CORREL(", "LINEST(", "DEVSQ("):
        assert function in text
    assert "T.DIST.2T(" in text and "SUMSQ(" in text  # a fit through the origin is audited
