"""A shared formula's tokens moved from its group's anchor (auditor.read.shared_formulas) are the
tokens openpyxl's tokenizer gives the cell's text, and the parse made from them is the parse of
the text.

Outside reference: openpyxl's ``Tokenizer`` on the moved text (``SharedFormula.at``, itself
proven equal to openpyxl's ``Translator`` in test_shared_formulas.py). Evidence: the generated
formulas of that test (every kind of reference, strings, numbers, errors, arrays, functions)
moved to many places, and crafted sheets read by both readers, with a cell inside a group's
block overwritten by a formula of its own.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from openpyxl.formula.tokenizer import Token, Tokenizer
from package_builders import package_parts, sheet_xml, write_package

from auditor.formula.syntax import parse
from auditor.grid import column_letter
from auditor.locate.formulas import FormulaLocator, shared_tokens
from auditor.read.open import read_workbook
from auditor.read.shared_formulas import SharedFormula, SharedGroups
from tests.read.test_shared_formulas import _formula


def _plain(tokens: list[Token]) -> list[tuple[str, str, str]]:
    return [(t.value, t.type, t.subtype) for t in tokens]


def test_moved_tokens_are_the_moved_texts_tokens() -> None:
    rng = random.Random(31)
    compared = 0
    for _ in range(3000):
        formula = _formula(rng)
        row, col = rng.randint(1, 50), rng.randint(1, 60)
        try:
            shared = SharedFormula(formula, row, col)
        except Exception:  # not tokenised: the reader refuses such a file (test_shared_formulas)
            continue
        for _ in range(4):
            to_row = max(1, row + rng.choice([-3, -1, 0, 1, 7, 1000]))
            to_col = min(16384, max(1, col + rng.choice([-2, 0, 1, 5])))
            try:
                text = shared.at(to_row, to_col)
            except Exception:  # off the sheet: no text, so no tokens either
                continue
            assert _plain(shared.tokens_at(to_row, to_col)) == _plain(Tokenizer(text).items), (
                formula,
                to_row,
                to_col,
            )
            compared += 1
    assert compared > 5000


def test_a_known_group() -> None:
    shared = SharedFormula("=SUM($A2:B2)*Data!C$1+Rate", 2, 5)
    assert [t.value for t in shared.tokens_at(4, 6)] == [
        "SUM(",
        "$A4:C4",
        ")",
        "*",
        "Data!D$1",
        "+",
        "Rate",
    ]
    assert _plain(SharedFormula('="text"', 1, 1).tokens_at(9, 9)) == [('"text"', "OPERAND", "TEXT")]
    # A name after a sheet moves without its sheet, as openpyxl's translator gives it.
    assert _plain(SharedFormula("=Data!rate", 1, 1).tokens_at(2, 1)) == [
        ("rate", "OPERAND", "RANGE")
    ]


def _group_sheet(rows: int, overwritten: int) -> str:
    """A2:A{rows+1} filled down from =B2*2+SUM($B$2:B2); row ``overwritten`` holds its own
    formula inside the block; C2:E2 filled right from =B2+C$1."""
    cells = []
    for row in range(2, rows + 2):
        if row == 2:
            a = '<c r="A2"><f t="shared" ref="A2:A{0}" si="0">B2*2+SUM($B$2:B2)</f><v>1</v></c>'
            a = a.format(rows + 1)
            right = '<c r="C2"><f t="shared" ref="C2:E2" si="1">B2+C$1</f><v>1</v></c>'
            right += '<c r="D2"><f t="shared" si="1"/><v>1</v></c>'
            right += '<c r="E2"><f t="shared" si="1"/><v>1</v></c>'
        elif row == overwritten:
            a, right = f'<c r="A{row}"><f>B{row}*3</f><v>1</v></c>', ""
        else:
            a, right = f'<c r="A{row}"><f t="shared" si="0"/><v>1</v></c>', ""
        cells.append(f'<row r="{row}">{a}<c r="B{row}"><v>{row}</v></c>{right}</row>')
    return sheet_xml("".join(cells))


@pytest.mark.parametrize("reader", ["stream", "lxml"])
def test_a_read_sheet_gives_each_group_cell_its_tokens(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, reader: str
) -> None:
    monkeypatch.setenv("REGAUDIT_READER", reader)
    path = write_package(tmp_path / "g.xlsx", package_parts({"S": _group_sheet(40, 17)}, []))
    workbook = read_workbook(path)
    given = {}
    for cell in workbook.formula_cells():
        tokens = shared_tokens(workbook, cell, cell.formula or "")
        if tokens is not None:
            assert _plain(tokens) == _plain(Tokenizer(cell.formula or "").items), cell
            given[cell.coord] = tokens
    # Every cell of both groups, the anchors too; not the cell written with its own formula.
    expected = {f"A{row}" for row in range(2, 42) if row != 17} | {"C2", "D2", "E2"}
    assert set(given) == expected
    assert [t.value for t in given["A30"]] == ["B30", "*", "2", "+", "SUM(", "$B$2:B30", ")"]
    assert [t.value for t in given["E2"]] == ["D2", "+", "E$1"]


def test_the_locators_parses_are_the_texts_parses(tmp_path: Path) -> None:
    path = write_package(tmp_path / "g.xlsx", package_parts({"S": _group_sheet(25, 9)}, []))
    workbook = read_workbook(path)
    parsed = FormulaLocator(workbook).parsed
    fresh = read_workbook(path)  # its own parse cache: every text parsed from its own tokens
    for (sheet, row, col), node in parsed.items():
        cell = fresh.cell(sheet, row, col)
        assert cell is not None
        assert node == parse(cell.formula or "", sheet, fresh), f"{column_letter(col)}{row}"
    assert len(parsed) == 25 + 3


def test_a_column_of_many_groups_finds_each_cells_own() -> None:
    """A column filled in many strokes (a group every ten rows, each reading its own block)
    and one wide group across it: each cell gets its own group's tokens, in any order."""
    groups = []
    for start in range(1, 400, 10):
        group = SharedFormula(f"=B{start}*{start}+$C$1", start, 1)
        for row in range(start, start + 10):
            group.include(row, 1)
        groups.append(group)
    wide = SharedFormula("=B1-1", 1, 1)
    wide.include(1, 5)
    groups.append(wide)
    found = SharedGroups(groups)
    rng = random.Random(5)
    places = [(row, 1) for row in range(1, 400)] + [(1, col) for col in range(2, 6)]
    rng.shuffle(places)
    for row, col in places:
        start = (row - 1) // 10 * 10 + 1
        text = f"=B{row}*{start}+$C$1" if col == 1 else f"={column_letter(col + 1)}1-1"
        tokens = found.tokens(row, col, text)
        assert tokens is not None and _plain(tokens) == _plain(Tokenizer(text).items)
        assert found.tokens(row, col, text + "+1") is None  # a text no group gives there
