"""The text cells of a sheet, indexed once per workbook (auditor.locate.text_cells)."""

from __future__ import annotations

from auditor.locate.text_cells import text_cells
from auditor.read.workbook import Cell, ErrorValue, Sheet, Workbook


def _sheet(name: str, cells: list[Cell]) -> Sheet:
    return Sheet(name, {(c.row, c.col): c for c in cells}, max(c.row for c in cells), 3)


def _book(*sheets: Sheet) -> Workbook:
    return Workbook("invented.xlsx", "0" * 64, {s.name: s for s in sheets}, [], True)


def test_text_cells_are_every_text_value_in_sheet_order() -> None:
    cells = [
        Cell("Kiln", 1, 1, "Temperature (°C)"),
        Cell("Kiln", 1, 2, "Shrinkage (%)"),
        Cell("Kiln", 2, 1, 820.0),
        Cell("Kiln", 2, 2, 4.1),
        Cell("Kiln", 3, 1, True),
        Cell("Kiln", 3, 2, ErrorValue("#N/A")),
        Cell("Kiln", 4, 1, "Slope"),
        Cell("Kiln", 4, 2, "steep", '=IF(B5>1,"steep","flat")'),  # a formula's stored text
        Cell("Kiln", 5, 2, 0.0123, "=SLOPE(B2:B3,A2:A3)"),
    ]
    sheet = _sheet("Kiln", cells)
    found = text_cells(_book(sheet), sheet)
    assert [c.address for c in found] == ["Kiln!A1", "Kiln!B1", "Kiln!A4", "Kiln!B4"]


def test_text_cells_are_kept_per_workbook_and_read_again_when_the_sheet_grows() -> None:
    sheet = _sheet("Dryer", [Cell("Dryer", 1, 1, "Airflow"), Cell("Dryer", 2, 1, 3.5)])
    book = _book(sheet)
    first = text_cells(book, sheet)
    assert text_cells(book, sheet) is first  # the same list: not walked twice
    sheet.cells[(3, 1)] = Cell("Dryer", 3, 1, "Mean")
    assert [c.address for c in text_cells(book, sheet)] == ["Dryer!A1", "Dryer!A3"]
    other = _book(sheet)  # another workbook object: its own index
    assert text_cells(other, sheet) is not first
