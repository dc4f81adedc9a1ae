"""Precision-aware agreement (auditor.compare.precision).

These are rules of the design (design.md, "Precision-aware agreement"), so every expected value
below is hand-derived from the rule stated beside it, not taken from running the code. Number
format codes and their displays are the spreadsheet's own (common practice).
"""

from __future__ import annotations

import pytest

from auditor.compare.precision import (
    agree_stored,
    agree_text,
    agree_typed,
    decimals_shown,
    parse_text_number,
)

# --- stored values: 1e-9 relative -------------------------------------------------------------


def test_stored_within_relative_tolerance() -> None:
    # Hand-derived: allowed = 1e-9 · |2.5| = 2.5e-9; a difference of 1e-9 passes, 1e-8 does not.
    result = agree_stored(2.5 + 1e-9, 2.5)
    assert result.agrees is True
    assert result.tolerance == "the same to 9 significant digits"
    assert result.allowed == pytest.approx(2.5e-9, rel=1e-12)
    assert agree_stored(2.5 + 1e-8, 2.5).agrees is False


def test_stored_at_fifteen_digits_agrees() -> None:
    # Design: files may keep 15 significant digits; 0.884796396144373 vs its double must agree.
    assert agree_stored(0.884796396144373, 0.8847963961443837).agrees is True


def test_stored_near_zero_needs_a_scale() -> None:
    # Hand-derived: true 0 gives an allowed band of 0 unless the caller gives a scale;
    # with scale 3.0 the band is 3e-9, so 1e-10 passes.
    assert agree_stored(1e-10, 0.0).agrees is False
    with_scale = agree_stored(1e-10, 0.0, scale=3.0)
    assert with_scale.agrees is True and with_scale.allowed == pytest.approx(3e-9, rel=1e-12)
    assert "measured against 3" in with_scale.tolerance


def test_stored_cannot_judge_missing_truth() -> None:
    assert agree_stored(1.0, float("nan")).agrees is None


# --- typed constants: the digits they show ----------------------------------------------------


def test_typed_at_format_decimals() -> None:
    # Design example: 0.5 typed, format "0.000" shows 0.500; true 0.50049 rounds to 0.500 (agree),
    # true 0.5006 rounds to 0.501 (disagree). Half a unit of 3 decimals is 0.0005.
    agrees = agree_typed(0.5, 0.50049, "0.000")
    assert agrees.agrees is True
    assert agrees.tolerance == "the same when rounded to the 3 decimal(s) shown"
    assert agree_typed(0.5, 0.5006, "0.000").agrees is False


def test_typed_digits_beyond_the_format_count() -> None:
    # Hand-derived: 0.5004 typed carries 4 decimals although "0.000" shows 3, so it is judged at
    # ±0.00005: true 0.50049 differs by 0.00009 and does not agree.
    assert agree_typed(0.5004, 0.50049, "0.000").agrees is False
    assert agree_typed(0.5004, 0.50043, "0.000").agrees is True


def test_typed_general_uses_shortest_repr() -> None:
    # Hand-derived: 0.118 typed in General carries 3 decimals: true 0.1179055 (Anscombe's SE)
    # differs by 0.0000945 < 0.0005 and agrees; true 0.1186 differs by 0.0006 and does not.
    assert agree_typed(0.118, 0.1179055).agrees is True
    assert agree_typed(0.118, 0.1186).agrees is False


def test_typed_integer_degrees_of_freedom() -> None:
    # Design: df typed as 18 carries 0 decimals (±0.5); 18 vs 18 agrees, 18 vs 17 does not.
    assert decimals_shown(18, "General") == 0
    assert decimals_shown(18.0, "General") == 0
    assert agree_typed(18, 18.0).agrees is True
    assert agree_typed(18, 17.0).agrees is False


def test_typed_binary_slack() -> None:
    # Hand-derived: 0.3 typed vs 0.1 + 0.2 (0.30000000000000004) is far inside ±0.05.
    assert agree_typed(0.3, 0.1 + 0.2).agrees is True
    # At exactly half a unit the boundary is inclusive. 2.3 vs 2.35 differ by 0.05 in decimal but
    # by 0.05000000000000027 in binary; the 1e-12 relative slack keeps that on the inside.
    assert abs(2.3 - 2.35) > 0.05
    assert agree_typed(2.3, 2.35).agrees is True
    assert agree_typed(2.3, 2.3501).agrees is False


@pytest.mark.parametrize(
    ("value", "number_format", "expected"),
    [
        (0.5, "0.000", 3),  # format shows 3 decimals, repr 1: the larger
        (0.12345, "0.00", 5),  # repr shows 5
        (1.23e-5, "0.00E+00", 7),  # 1.23E-05: 2 mantissa decimals, exponent -5 → 7 decimals
        (12345.0, "0.00E+00", 0),  # 1.23E+04 shows hundreds (-2), but 12345 typed shows units
        (0.123, "0.0%", 3),  # 12.3 % shows 3 decimals of the fraction
        (0.5, "0%", 2),  # 50 %: 2 decimals of the fraction
        (1234.5, "#,##0.00", 2),
        (-1.5, "0.00;[Red]-0.00", 2),  # negative section
        (3.0, '0.0" kg"', 1),  # quoted literal carries no digits
        (2.0, "0.00_);(0.00)", 2),  # padding "_)" carries no digits
        (45000.0, "yyyy-mm-dd", 0),  # a date shows no decimal digits: repr decides
        (0.25, "General", 2),
        (1e22, "General", -22),  # repr "1e+22": one significant digit, at 10^22
        (1.5e-5, "General", 6),  # repr "1.5e-05": 1 + 5
    ],
)
def test_decimals_shown(value: float, number_format: str, expected: int) -> None:
    # Hand-derived from the spreadsheet's number-format codes (common practice).
    assert decimals_shown(value, number_format) == expected


def test_typed_scientific_format() -> None:
    # Hand-derived: 1.23e-5 in "0.00E+00" is judged at ±5e-8 (7 decimals).
    assert agree_typed(1.23e-5, 1.2345e-5, "0.00E+00").agrees is True  # 1.2345E-05 → 1.23E-05
    assert agree_typed(1.23e-5, 1.236e-5, "0.00E+00").agrees is False  # → 1.24E-05


# --- text claims ------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("claim", "true", "expected"),
    [
        ("<0.001", 0.0004, True),
        ("<0.001", 0.0012, False),
        ("< .05", 0.049, True),
        ("< .05", 0.05, False),  # strict: 0.05 is not below 0.05
        ("p<0.05", 0.01, True),
        ("P < .001", 0.002, False),
        ("> 0.05", 0.2, True),
        ("≥0.1", 0.1, True),
        ("≥0.1", 0.0999, False),
        ("p ≤ 0.01", 0.01, True),
        ("n.s.", 0.3, True),
        ("ns", 0.01, False),
        ("not significant", 0.05, True),  # n.s. means p ≥ 0.05 (common practice)
        ("significant", 0.049, True),
        ("sig.", 0.06, False),
        ("p < 0.001***", 1e-5, True),
        ("**", 0.009, True),  # ** means p < 0.01 (common practice)
        ("**", 0.02, False),
    ],
)
def test_text_claims(claim: str, true: float, expected: bool) -> None:
    # Hand-derived: each claim read as the inequality it states.
    assert agree_text(claim, true).agrees is expected


def test_text_claim_tolerance_words() -> None:
    assert agree_text("<0.001", 0.0004).tolerance == "claim p < 0.001"
    assert agree_text("p >= .05", 0.2).tolerance == "claim p ≥ 0.05"
    assert agree_text("<0.001", 0.0004).allowed is None


def test_text_number_judged_at_its_digits() -> None:
    # Hand-derived: "0.0123" shows 4 decimals (±0.00005): true 0.01234 agrees, 0.0124 does not.
    assert agree_text("0.0123", 0.01234).agrees is True
    assert agree_text("0.0123", 0.0124).agrees is False
    # Trailing zeros typed as text count: "0.0120" shows 4 decimals, so 0.01206 does not agree.
    assert agree_text("0.0120", 0.01206).agrees is False
    # "1.2e-5" shows 6 decimals (±5e-7): 1.24e-5 agrees, 1.26e-5 does not.
    assert agree_text("1.2e-5", 1.24e-5).agrees is True
    assert agree_text("1.2e-5", 1.26e-5).agrees is False
    # "p = 0.000" claims p rounds to 0 at 3 decimals: p < 0.0005.
    assert agree_text("p = 0.000", 0.0004).agrees is True
    assert agree_text("p = 0.000", 0.0006).agrees is False


@pytest.mark.parametrize("claim", ["banana", "p", "<", "> abc", "0.05 maybe"])
def test_text_not_understood(claim: str) -> None:
    result = agree_text(claim, 0.01)
    assert result.agrees is None
    assert result.tolerance == f"text not understood: {claim!r}"


# --- numbers written as text ------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("12.5", 12.5),
        (" 1,234.5 ", 1234.5),
        ("1.2E-3", 0.0012),
        ("\u22120.4", -0.4),  # unicode minus sign
        ("45%", 0.45),
        ("(1.5)", -1.5),  # accounting negative (common practice)
        (".5", 0.5),
        ("1\u00a0234", None),  # a space is not a thousands separator here
        ("1,5", None),  # decimal comma: not a number in this locale
        ("12,34", None),  # misplaced grouping
        ("nan", None),
        ("inf", None),
        ("1_000", None),
        ("", None),
        ("abc", None),
    ],
)
def test_parse_text_number(text: str, expected: float | None) -> None:
    # Hand-derived: how a reader (and the spreadsheet's own parser) reads the text.
    result = parse_text_number(text)
    if expected is None:
        assert result is None
    else:
        assert result == pytest.approx(expected, rel=1e-15)
