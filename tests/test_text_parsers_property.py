"""Every parser of text meets arbitrary strings (hypothesis) and answers, never crashes.

Text reaches regaudit from cells typed by people: ids such as "E-01" in a data column, claims such
as "<0.001", labels in any language, references in formulas. Each parser either understands the
text or says it does not (None, an "unverifiable" agreement, a FormulaError); no other exception
may escape, because one bad cell must not cost the workbook.

The properties asserted beside "no crash" are facts of the trade (common practice): a number
stored as text is finite and written in ASCII digits, a comparison claim holds exactly when the
comparison does, a formatted number reads back as itself.
"""

from __future__ import annotations

import math
import string

from hypothesis import example, given, settings
from hypothesis import strategies as st

from auditor.compare.precision import agree_text, parse_text_number
from auditor.errors import FormulaError
from auditor.formula.syntax import parse
from auditor.grid import parse_cell
from auditor.locate.labels import looks_like_claim
from auditor.locate.roles import role_from_label
from auditor.locate.spec import PAIR_FUNCS

# Text shaped like what sits in cells: digits, signs, separators, letters, the odd symbol.
CELL_ALPHABET = string.digits + "+-.,eE %()<>=≤≥−pPnNsS*:$!'ABCxyz_ " + "٣éЗ\u00a0"
cell_text = st.one_of(st.text(), st.text(alphabet=CELL_ALPHABET, max_size=20))


@settings(max_examples=400, deadline=None)
@given(cell_text)
@example("E-01")
@example("(E-01)")
@example("e5")
@example("1e999")
@example("٣")
def test_text_number_is_a_finite_float_or_none(text: str) -> None:
    value = parse_text_number(text)
    assert value is None or (isinstance(value, float) and math.isfinite(value))
    if value is not None:
        assert any(ch in string.digits for ch in text)  # ASCII digits only


def test_ids_and_words_are_not_numbers() -> None:
    for text in ("E-01", "E-12", "e5", "Plant E-3", "n/a", "-", ".", "1e", "٣", "1e999"):
        assert parse_text_number(text) is None, text


@settings(max_examples=300, deadline=None)
@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e300, max_value=1e300))
def test_a_number_written_as_text_reads_back(value: float) -> None:
    assert parse_text_number(repr(value)) == value
    assert parse_text_number(f"{value:.6g}") == float(f"{value:.6g}")


@settings(max_examples=400, deadline=None)
@given(cell_text, st.floats(min_value=0.0, max_value=1.0))
@example("<0.001", 0.0005)
@example("p < .05", 0.2)
@example("E-01", 0.01)
@example("0E310", 0.3)  # a rounding unit beyond any float: once an OverflowError
def test_p_claims_are_judged_or_not_understood(claim: str, p: float) -> None:
    agreement = agree_text(claim, p)
    assert agreement.agrees in (True, False, None)
    assert isinstance(agreement.tolerance, str) and agreement.tolerance


@settings(max_examples=200, deadline=None)
@given(
    st.sampled_from(["<", ">", "<=", ">="]),
    st.floats(min_value=1e-6, max_value=1.0),
    st.floats(min_value=0.0, max_value=1.0),
)
def test_a_comparison_claim_holds_exactly_when_the_comparison_does(
    op: str, bound: float, p: float
) -> None:
    text = f"p {op} {bound!r}"
    expected = {"<": p < bound, ">": p > bound, "<=": p <= bound, ">=": p >= bound}[op]
    assert agree_text(text, p).agrees is expected


@settings(max_examples=400, deadline=None)
@given(cell_text)
def test_labels_give_a_known_role_or_none(text: str) -> None:
    role = role_from_label(text)
    assert role is None or isinstance(role, str)
    assert isinstance(looks_like_claim(text), bool)


@settings(max_examples=400, deadline=None)
@given(cell_text)
@example("$B$7")
@example("A0")
@example("XFD1048577")
def test_cell_references_parse_or_say_why(text: str) -> None:
    try:
        row, col = parse_cell(text)
    except ValueError as exc:
        assert "not a cell reference" in str(exc)
        return
    assert row >= 0 and col >= 1


formula_text = st.one_of(
    st.text(max_size=40),
    st.builds(
        lambda f, a, b: f"={f}({a},{b})",
        st.sampled_from(sorted(PAIR_FUNCS) + ["SUM", "TDIST", "INDEX"]),
        st.text(alphabet=string.ascii_uppercase + string.digits + "$:!'", max_size=12),
        st.text(alphabet=string.ascii_uppercase + string.digits + "$:!'", max_size=12),
    ),
)


@settings(max_examples=400, deadline=None)
@given(formula_text)
def test_formulas_parse_or_raise_formula_error(text: str) -> None:
    try:
        parse(text, "Sheet1")
    except FormulaError:
        pass
