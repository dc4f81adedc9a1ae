"""The formula parser: precedence, references, names, prefixes and its error messages.

Outside sources: the operator precedence table of the spreadsheet applications (Excel's
documentation of calculation operators, from memory: range ':', intersection ' ', negation,
percent, '^', '* /', '+ -', '&', comparisons; '^' left-associative). LibreOffice agrees, as the
recalculated workbook in tests/test_evaluate_libreoffice.py shows (=-2^2 is 4, =2^3^2 is 64).
The xlsx storage conventions (quoted sheet names with '' for an apostrophe, '_xlfn.' prefixes,
'[1]' external-book indices) are those of ECMA-376 Part 1, §18.17 (formulas), from memory.
"""

from __future__ import annotations

import pytest

from auditor.errors import FormulaError
from auditor.formula.syntax import (
    ArrayNode,
    Binary,
    Bool,
    Call,
    ErrorLit,
    Missing,
    NameNode,
    Number,
    Percent,
    Ref,
    RefNode,
    Text,
    Unary,
    calls,
    parse,
    references,
    walk,
)
from auditor.read.workbook import Cell, DefinedName, Sheet, Workbook


def book(max_row: int = 21) -> Workbook:
    data = Sheet("Data", max_row=max_row, max_col=3)
    data.cells[(max_row, 1)] = Cell("Data", max_row, 1, 1.0)
    other = Sheet("Other", max_row=5, max_col=3)
    spaced = Sheet("My Data", max_row=9, max_col=2)
    names = [
        DefinedName("xs", "Data!$A$2:$A$21"),
        DefinedName("ys", "Data!$B$2:$B$21"),
        DefinedName("ys", "Other!$C$1:$C$5", scope="Other"),
        DefinedName("alpha", "0.05"),
        DefinedName("Broken", "#REF!"),
        DefinedName("loop", "loop+1"),
    ]
    return Workbook("mem.xlsx", "", {"Data": data, "Other": other, "My Data": spaced}, names, True)


def n(value: float) -> Number:
    return Number(value)


A1 = RefNode(Ref("S", 1, 1, 1, 1))


class TestPrecedence:
    def test_multiplication_before_addition(self) -> None:
        assert parse("=1+2*3", "S") == Binary("+", n(1), Binary("*", n(2), n(3)))

    def test_unary_minus_binds_tighter_than_power(self) -> None:
        # Excel: =-2^2 is 4, not -4 (negation comes before exponentiation).
        assert parse("=-2^2", "S") == Binary("^", Unary("-", n(2)), n(2))

    def test_power_is_left_associative(self) -> None:
        # Excel: =2^3^2 is 64.
        assert parse("=2^3^2", "S") == Binary("^", Binary("^", n(2), n(3)), n(2))

    def test_subtraction_is_left_associative(self) -> None:
        assert parse("=10-4-3", "S") == Binary("-", Binary("-", n(10), n(4)), n(3))

    def test_percent_between_negation_and_power(self) -> None:
        assert parse("=-50%", "S") == Percent(Unary("-", n(50)))
        assert parse("=2^50%", "S") == Binary("^", n(2), Percent(n(50)))

    def test_concatenation_below_arithmetic_and_comparison_lowest(self) -> None:
        expected = Binary("=", Binary("&", Binary("+", n(1), n(2)), n(3)), n(33))
        assert parse("=1+2&3=33", "S") == expected

    def test_parentheses(self) -> None:
        assert parse("=(1+2)*3", "S") == Binary("*", Binary("+", n(1), n(2)), n(3))

    def test_whitespace_is_ignored_except_between_operands(self) -> None:
        assert parse("= 1 + 2 ", "S") == Binary("+", n(1), n(2))
        a = Ref("S", 1, 1, 2, 2)
        b = Ref("S", 1, 2, 3, 3)
        assert parse("=A1:B2 B1:C3", "S") == Binary(" ", RefNode(a), RefNode(b))

    def test_literals(self) -> None:
        assert parse('="say ""hi"""', "S") == Text('say "hi"')
        assert parse("=TRUE", "S") == Bool(True)
        assert parse("=#N/A", "S") == ErrorLit("#N/A")
        assert parse("=1E-3", "S") == n(0.001)

    def test_array_constant(self) -> None:
        expected = ArrayNode(((n(1), n(2)), (Text("a"), Unary("-", n(4)))))
        assert parse('={1,2;"a",-4}', "S") == expected


class TestReferences:
    def test_cell_and_range(self) -> None:
        assert parse("=$B$7", "Data") == RefNode(Ref("Data", 7, 2, 7, 2))
        ref = references(parse("=SUM(B2:B21)", "Data"))[0]
        assert ref == Ref("Data", 2, 2, 21, 2)
        assert (ref.rows, ref.cols, ref.is_cell) == (20, 1, False)
        assert ref.address == "Data!B2:B21"
        assert Ref("Data", 2, 5, 2, 5).address == "Data!E2"

    def test_reversed_corners_are_normalised(self) -> None:
        assert parse("=B9:A2", "S") == RefNode(Ref("S", 2, 1, 9, 2))

    def test_quoted_sheet_names(self) -> None:
        node = parse("=SLOPE('My Data'!B2:B9,'My Data'!$A$2:$A$9)", "Data")
        assert [r.address for r in references(node)] == ["My Data!B2:B9", "My Data!A2:A9"]
        assert parse("='It''s'!A1", "S") == RefNode(Ref("It's", 1, 1, 1, 1))

    def test_sheet_on_both_ends(self) -> None:
        assert parse("=Data!A1:Data!B3", "S") == RefNode(Ref("Data", 1, 1, 3, 2))

    def test_sheet_spelling_follows_the_workbook(self) -> None:
        assert references(parse("=data!A1", "Other", book()))[0].sheet == "Data"

    def test_whole_column_ends_at_the_last_used_row(self) -> None:
        ref = references(parse("=SUM(Data!$B:$B)", "Other", book(max_row=21)))[0]
        assert ref == Ref("Data", 1, 2, 21, 2, whole_column=True)
        assert ref.address == "Data!B1:B21"

    def test_whole_column_without_a_workbook_spans_the_grid(self) -> None:
        ref = references(parse("=A:B", "S"))[0]
        assert (ref.r1, ref.r2, ref.c1, ref.c2, ref.whole_column) == (1, 1_048_576, 1, 2, True)

    def test_whole_row(self) -> None:
        ref = references(parse("=SUM(2:3)", "Data", book()))[0]
        assert (ref.r1, ref.r2, ref.c1, ref.c2, ref.whole_row) == (2, 3, 1, 3, True)

    def test_external_references(self) -> None:
        node = parse("=[1]Sheet1!A1+'[other.xlsx]My Sheet'!B2:B5", "S")
        first, second = references(node)
        assert (first.external, first.sheet, first.address) == ("[1]", "Sheet1", "[1]Sheet1!A1")
        assert (second.external, second.sheet) == ("[other.xlsx]", "My Sheet")
        assert parse("=[1]!Rate", "S") == NameNode("Rate", external="[1]")

    def test_range_operator_glued_to_a_function(self) -> None:
        # The tokenizer returns "A2:INDEX(" as one function token; the parser splits it.
        node = parse("=SUM(A2:INDEX(A:A,9))", "S")
        assert isinstance(node, Call)
        inner = node.args[0]
        assert isinstance(inner, Binary) and inner.op == ":"
        assert inner.left == RefNode(Ref("S", 2, 1, 2, 1))
        assert isinstance(inner.right, Call) and inner.right.name == "INDEX"


class TestNames:
    def test_workbook_scope(self) -> None:
        node = parse("=SLOPE(ys,xs)", "Data", book())
        assert [r.address for r in references(node)] == ["Data!B2:B21", "Data!A2:A21"]

    def test_sheet_scope_wins_on_its_sheet(self) -> None:
        node = parse("=SLOPE(ys,xs)", "Other", book())
        assert [r.address for r in references(node)] == ["Other!C1:C5", "Data!A2:A21"]

    def test_sheet_qualified_name(self) -> None:
        assert references(parse("=SUM(Other!ys)", "Data", book()))[0].address == "Other!C1:C5"

    def test_constant_and_broken_names(self) -> None:
        assert parse("=alpha", "Data", book()) == n(0.05)
        assert parse("=Broken", "Data", book()) == ErrorLit("#REF!")

    def test_unresolved_names(self) -> None:
        assert parse("=nothing*2", "Data", book()) == Binary("*", NameNode("nothing"), n(2))
        assert parse("=xs", "Data") == NameNode("xs")  # no workbook: nothing to resolve against
        assert parse("=Table1[Dose]", "Data", book()) == NameNode("Table1[Dose]")

    def test_a_self_referring_name_stops(self) -> None:
        node = parse("=loop", "Data", book())
        assert NameNode("loop") in list(walk(node))


class TestCalls:
    def test_storage_prefixes_are_removed(self) -> None:
        assert parse("=_xlfn.T.DIST.2T(A1,3)", "S") == Call("T.DIST.2T", (A1, n(3)))
        assert calls(parse("=_xlfn._xlws.SORT(A1:A3)", "S"))[0].name == "SORT"
        assert calls(parse("=stdev(A1:A3)", "S"))[0].name == "STDEV"

    def test_true_as_a_function(self) -> None:
        node = parse("=LINEST(B2:B9,A2:A9,TRUE(),FALSE())", "S")
        assert isinstance(node, Call)
        assert node.args[2:] == (Call("TRUE", ()), Call("FALSE", ()))

    def test_empty_arguments(self) -> None:
        node = parse("=LINEST(B2:B9,A2:A9,,TRUE)", "S")
        assert isinstance(node, Call) and node.args[2] == Missing()
        assert parse("=IF(A1,,)", "S") == Call(
            "IF", (RefNode(Ref("S", 1, 1, 1, 1)), Missing(), Missing())
        )

    def test_calls_and_references_depth_first_outer_first(self) -> None:
        node = parse("=INDEX(LINEST(B2:B9,A2:A9,TRUE,TRUE),1)+ABS(C1)", "S")
        assert [c.name for c in calls(node)] == ["INDEX", "LINEST", "ABS"]
        assert [r.address for r in references(node)] == ["S!B2:B9", "S!A2:A9", "S!C1"]

    def test_long_chains_do_not_recurse(self) -> None:
        text = "=" + "+".join(f"A{i}" for i in range(1, 3001))
        assert len(references(parse(text, "S"))) == 3000


class TestErrors:
    @pytest.mark.parametrize(
        "text",
        ["=SUM(A1", "=1+", "=(1+2", "=1 2", "={1,2;3}", "=SUM(A1))", "=", "=*3"],
    )
    def test_unparseable_text_is_quoted(self, text: str) -> None:
        with pytest.raises(FormulaError) as caught:
            parse(text, "S")
        assert repr(text) in str(caught.value)


def test_parses_are_cached() -> None:
    workbook = book()
    assert parse("=SLOPE(ys,xs)", "Data", workbook) is parse("=SLOPE(ys,xs)", "Data", workbook)
    assert parse("=A1+1", "S") is parse("=A1+1", "S")
    # A different workbook resolves names on its own.
    assert parse("=SLOPE(ys,xs)", "Other", workbook) != parse("=SLOPE(ys,xs)", "Data", workbook)
