"""The index the fast scanner keeps of each sheet (auditor.read.workbook.SheetIndex) holds what a
walk over the sheet's cells finds, and the stages that read it answer as they do without it.

Evidence: generated sheets of every cell kind the scanner types (plain ints and floats, an
exponent, an overflow to ``#NUM!``, ``t="n"``, a date style, shared and inline strings,
logicals, errors, formulas with stored numbers, text and nothing, empty values, rows written
out of order), read by the scanner and by the lxml reader, each in a plain dict and in the
compact store: the readings are equal, the index equals the walk, and the pasted-number arrays,
the text cells and the formula layout are the same with the index and without it. A cell given
twice, a merged cell dropped and a cell added after reading each make the index stale.
"""

from __future__ import annotations

import random
from collections import Counter
from pathlib import Path

import pytest
from package_builders import package_parts, sheet_xml, write_package

from auditor.evaluation.layout import FormulaLayout
from auditor.grid import column_letter
from auditor.locate.pasted_numbers import entries, number_grid
from auditor.locate.text_cells import text_cells
from auditor.read import compact, scan
from auditor.read.equality import index_differences, workbook_differences
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, ErrorValue, Workbook, sheet_index

STRINGS = ["alpha", "beta", "x &amp; y", "12"]
# Style 1 formats dates (built-in number format 14), style 2 percentages (10).
STYLES = '<cellXfs count="3"><xf numFmtId="0"/><xf numFmtId="14"/><xf numFmtId="10"/></cellXfs>'


def _cell(rng: random.Random, ref: str, plain: bool, strings: bool) -> str:
    """One ``<c>`` of a kind drawn at random (``plain``: a number or, with ``strings``, a shared
    string, no formula; otherwise of any kind, some holding nothing)."""
    number = rng.choice(["7", "-3", "0", "2.5", "-0.0", "1.5E3", "4e-2", "1E400", "007"])
    style = rng.choice(["", ' s="1"', ' s="2"', ' s="0"'])
    kinds = [
        f'<c r="{ref}"{style}><v>{number}</v></c>',
        f'<c r="{ref}"{style}><v>{number}</v></c>',
        f'<c r="{ref}"{style}><v>{number}</v></c>',
        f'<c r="{ref}" t="n"><v>{number}</v></c>',
        f'<c r="{ref}"{style} t="s"><v>{rng.randrange(len(STRINGS))}</v></c>',
        f'<c r="{ref}" t="b"><v>{rng.choice("01")}</v></c>',
        f'<c r="{ref}" t="e"><v>#DIV/0!</v></c>',
        f'<c r="{ref}" t="inlineStr"><is><t>typed {ref}</t></is></c>',
        f'<c r="{ref}"><f>A1*2</f><v>{number}</v></c>',
        f'<c r="{ref}" t="str"><f>"a"&amp;"b"</f><v>ab</v></c>',
        f'<c r="{ref}" t="b"><f>TRUE()</f><v>1</v></c>',
        f'<c r="{ref}"><f>B1+1</f></c>',
        f'<c r="{ref}"{style}><v></v></c>',
        f'<c r="{ref}"{style}/>',
    ]
    if plain:
        return rng.choice(kinds[: 5 if strings else 4])
    return rng.choice(kinds)


def _sheet(rng: random.Random, rows: int) -> str:
    """Rows of random cells: most rows plain, some mixed; two rows out of order in some."""
    numbers = list(range(1, rows + 1))
    if rows > 8 and rng.random() < 0.3:
        numbers[3], numbers[7] = numbers[7], numbers[3]
    out = []
    strings = rng.random() < 0.5  # runs of numbers alone, and runs with text among them
    for row in numbers:
        attributes = rng.choice(["", ' spans="1:6"', ' ht="15" customHeight="1"'])
        plain = rng.random() < 0.6
        cells = "".join(
            _cell(rng, f"{column_letter(col)}{row}", plain, strings)
            for col in range(1, rng.randint(1, 7))
        )
        out.append(f'<row r="{row}"{attributes}>{cells}</row>' if cells else f'<row r="{row}"/>')
    return sheet_xml("".join(out))


def _book(tmp_path: Path, name: str, sheets: dict[str, str]) -> Path:
    return write_package(tmp_path / f"{name}.xlsx", package_parts(sheets, STRINGS, STYLES))


def _without_index(book: Workbook) -> Workbook:
    for sheet in book.sheets.values():
        sheet.index = None
    return book


def _assert_index_agrees(path: Path) -> Workbook:
    before = Counter(scan.FALLBACKS)
    fast = read_workbook(path)
    assert scan.FALLBACKS - before == Counter()  # the scanner read every part itself
    assert workbook_differences(read_workbook(path, engine="lxml"), fast) == []
    assert index_differences(fast) == []
    walked = _without_index(read_workbook(path))
    for name, sheet in fast.sheets.items():
        other = walked.sheets[name]
        for formulas in (False, True):
            assert entries(sheet, formulas) == entries(other, formulas)
        grid, walked_grid = number_grid(sheet), number_grid(other)
        assert type(grid) is type(walked_grid) and list(grid.items()) == list(walked_grid.items())
        assert text_cells(fast, sheet) == text_cells(walked, other)
    assert FormulaLayout.of(fast) == FormulaLayout.of(walked)
    assert fast.formula_cells() == walked.formula_cells()
    return fast


@pytest.mark.parametrize("compact_store", [False, True])
def test_generated_sheets_index_what_a_walk_finds(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, compact_store: bool
) -> None:
    if compact_store:
        monkeypatch.setattr(compact, "COMPACT_PART_BYTES", 0)
    indexed = 0
    for seed in range(40):
        rng = random.Random(seed)
        sheets = {f"S{i}": _sheet(rng, rng.randint(1, 40)) for i in range(3)}
        book = _assert_index_agrees(_book(tmp_path, f"g{seed}", sheets))
        indexed += sum(1 for sheet in book.sheets.values() if sheet_index(sheet) is not None)
    assert indexed == 120  # every sheet kept its index (no cell given twice, nothing merged)


def test_the_index_of_a_known_sheet(tmp_path: Path) -> None:
    rows = (
        '<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1"><v>3</v></c><c r="C1"><v>1E400</v></c>'
        '<c r="D1" s="1"><v>44000</v></c></row>'
        '<row r="2"><c r="A2"><v>2.5</v></c><c r="B2"><f>A2*2</f><v>5</v></c>'
        '<c r="C2" t="b"><v>1</v></c><c r="D2" t="str"><f>"x"</f><v>x</v></c></row>'
    )
    book = _assert_index_agrees(_book(tmp_path, "known", {"S": sheet_xml(rows)}))
    index = sheet_index(book.sheets["S"])
    assert index is not None
    assert index.numbers.entries() == [
        (1, 2, 3.0, False),
        (1, 4, 44000.0, False),  # a date is its serial number
        (2, 1, 2.5, False),
        (2, 2, 5.0, True),
    ]
    assert [c.coord for c in index.texts] == ["A1", "D2"]
    assert [c.coord for c in index.formulas] == ["B2", "D2"]
    assert type(book.sheets["S"].cells[(1, 2)].value) is int  # "3" stays an int
    assert book.sheets["S"].cells[(1, 3)].value == ErrorValue("#NUM!")  # 1E400: no infinity


def test_a_cell_given_twice_a_merged_cell_or_a_cell_added_make_the_index_stale(
    tmp_path: Path,
) -> None:
    twice = sheet_xml('<row r="1"><c r="A1"><v>1</v></c><c r="A1"><v>2</v></c></row>')
    merged = sheet_xml(
        '<row r="1"><c r="A1"><v>1</v></c><c r="B1"><v>2</v></c></row>',
        '<mergeCells count="1"><mergeCell ref="A1:B1"/></mergeCells>',
    )
    plain = sheet_xml('<row r="1"><c r="A1"><v>1</v></c></row>')
    book = _assert_index_agrees(_book(tmp_path, "stale", {"T": twice, "M": merged, "P": plain}))
    assert sheet_index(book.sheets["T"]) is None
    assert book.sheets["T"].cells[(1, 1)].value == 2
    assert sheet_index(book.sheets["M"]) is None
    sheet = book.sheets["P"]
    assert sheet_index(sheet) is not None
    sheet.cells[(2, 1)] = Cell("P", 2, 1, 9.0)
    assert sheet_index(sheet) is None
    assert list(entries(sheet)[2]) == [1.0, 9.0]
