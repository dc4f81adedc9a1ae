"""Long columns read through the reader's number index (auditor.evaluation.column_reads) hold, cell
for cell and type for type, what reading each cell one by one gives: generated workbooks written
with XlsxWriter and read by the fast reader (ints, floats, text, logicals, error values, blanks,
formulas with their stored values, gaps), columns and blocks of every length around the
threshold."""

from __future__ import annotations

import random
from pathlib import Path

import pytest
import xlsxwriter

from auditor.evaluation import column_reads
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import Ref
from auditor.read.open import read_workbook
from auditor.read.workbook import Workbook, sheet_index


def _write(path: Path, rng: random.Random, rows: int) -> None:
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Readings")
    for row in range(rows):
        for col in range(4):
            roll = rng.random()
            if roll < 0.45:
                sheet.write_number(row, col, rng.uniform(-1e4, 1e4))
            elif roll < 0.6:
                sheet.write_number(row, col, rng.randrange(-50, 50))  # stored as a whole number
            elif roll < 0.68:
                sheet.write_string(row, col, rng.choice(["n/a", "12.5", "Total"]))
            elif roll < 0.72:
                sheet.write_boolean(row, col, rng.random() < 0.5)
            elif roll < 0.76:
                sheet.write_formula(row, col, "=1/0", None, "#DIV/0!")
            elif roll < 0.84 and row > 0:
                sheet.write_formula(row, col, f"=A{row}*2", None, rng.uniform(0, 9))
            elif roll < 0.9:
                sheet.write_blank(row, col, None)  # no cell is written for a blank unformatted
            # else: no cell at all
    book.close()


def _plain(workbook: Workbook, ref: Ref, monkeypatch: pytest.MonkeyPatch) -> list[list[object]]:
    with monkeypatch.context() as patched:
        patched.setattr(column_reads, "MIN_ROWS", 1 << 40)  # every cell looked up
        return Evaluator(workbook).range_values(ref).tolist()


@pytest.mark.parametrize("seed", range(8))
def test_a_column_through_the_index_holds_what_each_cell_holds(
    seed: int, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    rng = random.Random(seed)
    rows = rng.choice([400, 700, 1200])
    path = tmp_path / f"columns_{seed}.xlsx"
    _write(path, rng, rows)
    workbook = read_workbook(path)
    assert sheet_index(workbook.sheets["Readings"]) is not None  # the fast reader's index
    for _ in range(6):
        r1 = rng.randrange(1, rows // 3)
        r2 = rng.choice([rng.randrange(r1, rows), rows + rng.randrange(0, 80)])  # past the end too
        c1 = rng.randrange(1, 5)
        ref = Ref("Readings", r1, c1, r2, rng.randrange(c1, 6))
        indexed = Evaluator(workbook).range_values(ref).tolist()
        plain = _plain(workbook, ref, monkeypatch)
        assert len(indexed) == len(plain)
        for got, want in zip(indexed, plain, strict=True):
            assert [type(v) for v in got] == [type(v) for v in want]
            assert got == want


def test_the_index_is_used_for_a_long_column_and_not_for_a_short_one(tmp_path: Path) -> None:
    path = tmp_path / "long.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Readings")
    for row in range(500):
        sheet.write_number(row, 0, row * 0.5)
    sheet.write_string(10, 0, "gap")
    book.close()
    workbook = read_workbook(path)
    columns = column_reads.IndexedColumns()
    found = columns.column(workbook.sheets["Readings"], 1, 1, 500)
    assert found is not None
    assert found[:3] == [0.0, 0.5, 1.0] and found[10] == "gap"
    assert [type(v) for v in found[:3]] == [float] * 3
    assert columns.column(workbook.sheets["Readings"], 1, 1, 20) is None  # short: one by one
    assert columns.column(workbook.sheets["Readings"], 2, 1, 500) == [None] * 500  # empty


def test_keys_out_of_row_order_are_not_searched(tmp_path: Path) -> None:
    path = tmp_path / "order.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Readings")
    for row in range(500):
        sheet.write_number(row, 0, float(row))
    book.close()
    workbook = read_workbook(path)
    index = sheet_index(workbook.sheets["Readings"])
    assert index is not None
    index.numbers.keys.reverse()  # as a file listing its cells out of order would give
    index.numbers.values.reverse()
    assert column_reads.IndexedColumns().column(workbook.sheets["Readings"], 1, 1, 500) is None
