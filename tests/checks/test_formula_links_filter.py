"""other-workbook-ref walks only the formulas that can name another workbook (a bracket in their
text, or every formula when a defined name holds one); its findings are those of a walk over
every formula: on the fixture workbooks, a sample of the generated layouts, and workbooks
written here with links in the formulas' text or behind a defined name."""

from __future__ import annotations

from pathlib import Path

import pytest
import xlsxwriter

from auditor.checks import formula_links
from auditor.context import WorkbookContext
from auditor.locate.locator import Locator, locate
from auditor.model import Finding
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2] / "fixtures"
BOOKS = (
    sorted((ROOT / "workbooks").glob("*.xlsx"))
    + sorted((ROOT / "layouts" / "workbooks").glob("*.xlsx"))[::10]
)


def _findings(path: Path, every: bool, monkeypatch: pytest.MonkeyPatch) -> list[Finding]:
    workbook = read_workbook(path)
    locator = Locator(workbook)
    specs = locate(workbook, None, locator)
    context = WorkbookContext(True, 0, workbook=workbook, specs=specs, parsed=locator.parsed)
    with monkeypatch.context() as patch:
        if every:  # the plain way: every parsed formula walked
            patch.setattr(formula_links, "_may_link", lambda ctx: iter(ctx.parsed.items()))
        return formula_links.other_workbook_ref(context)


def _linked_book(path: Path, through_name: bool) -> Path:
    """Invented: a press-force log whose slope reads a partner's file, directly or by a name."""
    book = xlsxwriter.Workbook(path)
    sheet = book.add_worksheet("Press Log")
    sheet.write_row(0, 0, ["Load (kN)", "Travel (mm)"])
    for row in range(1, 9):
        sheet.write_row(row, 0, [row * 2.5, row * 0.41 + (row % 3) * 0.02])
    sheet.write_formula("D2", "=SLOPE(B2:B9,A2:A9)")
    sheet.write_formula("D3", "=INTERCEPT(B2:B9,A2:A9)")
    if through_name:
        book.define_name("partner_travel", "=[1]Bench!$B$2:$B$9")
        sheet.write_formula("D5", "=SLOPE(partner_travel,A2:A9)")
    else:
        sheet.write_formula("D5", "=SLOPE([1]Bench!B2:B9,[1]Bench!A2:A9)")
        sheet.write_formula("D6", "=AVERAGE('[1]Bench'!C2:C9)")
    book.close()
    return path


@pytest.mark.parametrize("path", BOOKS, ids=[p.name for p in BOOKS])
def test_the_fixtures_give_what_a_walk_over_every_formula_gives(
    path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    assert _findings(path, False, monkeypatch) == _findings(path, True, monkeypatch)


@pytest.mark.parametrize("through_name", [False, True])
def test_links_in_the_text_or_behind_a_name_are_found(
    tmp_path: Path, through_name: bool, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = _linked_book(tmp_path / "press.xlsx", through_name)
    found = _findings(path, False, monkeypatch)
    assert found == _findings(path, True, monkeypatch)
    assert [f.check for f in found] == ["other-workbook-ref"]
    assert "Press Log!D5" in found[0].cells
    assert ("Press Log!D6" in found[0].cells) is not through_name
