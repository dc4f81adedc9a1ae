"""The decimals a number format shows (``precision._format_decimals``), each format read once
(``_sections_shown``) and each value placed in its section and, for scientific formats, at its
own exponent. Expected values hand-derived from the spreadsheet's number-format codes (common
practice): sections "positive;negative;zero;text", literal text, escapes and colours show no
digits, "%" shows two more decimals of the fraction, each trailing "," divides by a thousand,
an engineering format's exponent is a multiple of its integer placeholders."""

from __future__ import annotations

import pytest

from auditor.compare import precision


@pytest.mark.parametrize(
    ("value", "number_format", "expected"),
    [
        (0.0, '0.00;(0.00);"zero"', None),  # the zero section is a literal only
        (-2.5, "0.00;(0.000)", 3),  # the negative section
        (2.5, "0.00;(0.000)", 2),
        (12345.0, "0.0,", -2),  # one decimal of thousands: hundreds
        (5e6, "#,##0,,", -6),  # millions
        (12345.0, "##0.0E+0", -2),  # 12.3E+3: exponent 3, one decimal: hundreds
        (0.000123, "0.00E+00", 6),  # 1.23E-04
        (0.5, "0.0%", 3),
        (1.0, "[Red]0.0", 1),
        (3.0, "\\$0.00", 2),
        (45000.0, "yyyy-mm-dd", None),
        (1.0, "@", None),
        (1.0, "", None),  # no format is General
        (1.0, "0.0?", 2),
    ],
)
def test_decimals_a_format_shows(value: float, number_format: str, expected: int | None) -> None:
    assert precision._format_decimals(value, number_format) == expected


def test_one_format_read_once_serves_every_value() -> None:
    """The reading is kept per format; the section and the exponent are each value's own."""
    precision._sections_shown.cache_clear()
    assert precision._format_decimals(12345.0, "0.00E+00;-0.0E+00") == -2  # 1.23E+04
    assert precision._format_decimals(0.00012345, "0.00E+00;-0.0E+00") == 6  # 1.23E-04
    assert precision._format_decimals(-0.00012345, "0.00E+00;-0.0E+00") == 5  # -1.2E-04
    info = precision._sections_shown.cache_info()
    assert (info.misses, info.hits) == (1, 2)


def test_a_claim_whose_rounding_unit_is_beyond_any_float_is_not_understood() -> None:
    # "0E310" would round to the nearest 1e310, larger than the largest double (about 1.8e308).
    assert precision.agree_text("0E310", 0.3).agrees is None
    assert "not understood" in precision.agree_text("0E310", 0.3).tolerance
    assert precision.agree_text("0E308", 0.3).agrees is True  # 1e308 is still a double
