"""A1 <-> relative R1C1 (auditor.formula.r1c1).

Outside truth: openpyxl's ``formula.translate.Translator``, an independent implementation of what
a spreadsheet does when a formula is copied from one cell to another. A formula and its copy must
have the same relative R1C1 text; that is what the sibling-block audit relies on. The hand-written
cases follow the R1C1 convention of the spreadsheet applications (``R[-1]C`` is the cell above,
``R3C5`` is $E$3; common practice).
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from openpyxl.formula.translate import Translator

from auditor.errors import FormulaError
from auditor.formula.operands import Corner, Reference, parse_a1
from auditor.formula.r1c1 import (
    canonical,
    references,
    rewrite_references,
    to_a1,
    to_r1c1,
)
from auditor.grid import column_letter


@pytest.mark.parametrize(
    ("formula", "row", "col", "expected"),
    [
        ("=SLOPE(B4:B13,A4:A13)", 4, 5, "=SLOPE(RC[-3]:R[9]C[-3],RC[-4]:R[9]C[-4])"),
        ("=STEYX($E$3:$E$12,$D$3:$D$12)", 17, 8, "=STEYX(R3C5:R12C5,R3C4:R12C4)"),
        ("=E4/E10", 11, 5, "=R[-7]C/R[-1]C"),
        ("=A$1+$A1", 2, 2, "=R1C[-1]+R[-1]C1"),
        ("='My Data'!B2:B9", 1, 1, "='My Data'!R[1]C[1]:R[8]C[1]"),
        ("=SUM(A:A)+SUM($B:$C)", 5, 3, "=SUM(C[-2]:C[-2])+SUM(C2:C3)"),
        ("=SUM(3:3)", 5, 1, "=SUM(R[-2]:R[-2])"),
        ("=[1]Data!A1", 1, 1, "=[1]Data!RC"),
        ("=A1:INDEX(B:B,3)", 2, 2, "=R[-1]C[-1]:INDEX(C:C,3)"),
    ],
)
def test_known_conversions(formula: str, row: int, col: int, expected: str) -> None:
    # Source: the R1C1 convention (common practice): offsets in brackets, absolute numbers bare.
    assert to_r1c1(formula, row, col) == expected
    assert to_a1(expected, row, col) == formula


def test_text_names_tables_and_errors_are_left_alone() -> None:
    formula = '=IF(x_range>0,"A1",Table1[Col])+#REF!+resp_slope+TRUE'
    assert to_r1c1(formula, 5, 5) == formula
    assert references(formula) == []


def test_cells_beyond_the_grid_are_names() -> None:
    # XFD is the last column (16,384); XFE1 can only be a name.
    assert to_r1c1("=XFD1+XFE1", 1, 1) == "=RC[16383]+XFE1"


def test_a_reference_moved_off_the_grid_becomes_ref_error() -> None:
    # Source: spreadsheet behaviour when a copy would point above row 1 (#REF!).
    assert to_a1("=R[-5]C", 3, 1) == "=#REF!"


def test_parse_a1_keeps_sheet_workbook_and_anchors() -> None:
    ref = parse_a1("'[2]Site B'!$B$2:C$13")
    assert ref == Reference("'[2]Site B'!", Corner(2, 2, True, True), Corner(13, 3, True, False))
    assert ref.sheet == "Site B"
    assert ref.external == "[2]"
    assert ref.anchored
    assert parse_a1("Sheet1!A1:Sheet2!B2") is None  # a 3-D span is left as written


def test_expand_rewrites_a_defined_name_as_its_reference() -> None:
    names = {"cal_x": "Data!$A$2:$A$11"}
    out = rewrite_references(
        "=DEVSQ(cal_x)", lambda ref: f"<{ref.start.row}-{ref.end.row}>", expand=names.get
    )
    assert out == "=DEVSQ(<2-11>)"


def test_canonical_drops_spelling_differences() -> None:
    a = "=_xlfn.T.DIST.2T( ABS(e11) , e9 )+LINEST(B3:B9,A3:A9,TRUE(),TRUE())"
    b = "=T.DIST.2T(ABS(E11),E9)+LINEST(B3:B9,A3:A9,TRUE,TRUE)"
    assert canonical(a) == canonical(b)
    assert canonical('="a b"&A1 B2') == '="a b"&A1 B2'  # text kept, intersection kept


def test_unbalanced_text_is_a_formula_error() -> None:
    with pytest.raises(FormulaError):
        to_r1c1('=SUM("A1', 1, 1)


def _corner(draw: st.DrawFn) -> str:
    col = draw(st.integers(1, 60))
    row = draw(st.integers(1, 200))
    return (
        ("$" if draw(st.booleans()) else "")
        + column_letter(col)
        + ("$" if draw(st.booleans()) else "")
        + str(row)
    )


@st.composite
def formulas(draw: st.DrawFn) -> str:
    parts = []
    for _ in range(draw(st.integers(1, 4))):
        ref = _corner(draw)
        if draw(st.booleans()):
            ref += ":" + _corner(draw)
        if draw(st.booleans()):
            ref = draw(st.sampled_from(["Data!", "'Run 1'!"])) + ref
        parts.append(draw(st.sampled_from(["SUM({})", "DEVSQ({})", "{}", "ABS({})"])).format(ref))
    return "=" + "+".join(parts)


@settings(max_examples=150, deadline=None)
@given(formulas(), st.integers(1, 40), st.integers(1, 20), st.integers(0, 30), st.integers(0, 10))
def test_a_copy_keeps_its_r1c1_text(
    formula: str, row: int, col: int, down: int, right: int
) -> None:
    # Source: openpyxl's Translator moves the formula as a spreadsheet copy would.
    origin = f"{column_letter(col + 30)}{row + 220}"  # far enough that no copy leaves the grid
    target = f"{column_letter(col + 30 + right)}{row + 220 + down}"
    copied = Translator(formula, origin=origin).translate_formula(target)
    assert to_r1c1(copied, row + 220 + down, col + 30 + right) == to_r1c1(
        formula, row + 220, col + 30
    )
    assert to_a1(to_r1c1(formula, row + 220, col + 30), row + 220, col + 30) == formula
