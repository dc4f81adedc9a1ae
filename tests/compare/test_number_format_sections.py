"""The decimals a number format shows, read once per format (``precision._sections_shown``),
equal the plain reading of the format for each value, on generated formats and values:
fixed, thousands-separated, percent, scaled by thousands, scientific and engineering, with
literal text, colours and escapes, sections for negatives and zero, text, dates and General."""

from __future__ import annotations

import math
import random
import re

import pytest

from auditor.compare import precision

PIECES = (
    "0",
    "0.0",
    "0.000",
    "#,##0.00",
    "0.0%",
    "0.00%",
    "0.00E+00",
    "##0.0E+0",
    "0.0,",
    "#,##0,,",
    '"kg" 0.00',
    "[Red]0.0",
    "\\$0.00",
    "_(0.00_)",
    "General",
    "@",
    "yyyy-mm-dd",
    "h:mm",
    "0.0?",
    "",
)


def _plain(value: float, number_format: str) -> int | None:
    """The former reading, every call: pick the section, strip it, count its placeholders."""
    sections = re.findall(r'(?:"[^"]*"|\\.|\[[^\]]*\]|[^;"\\\[])+', number_format or "General")
    sections = sections or [""]
    section = sections[0]
    if value < 0 and len(sections) > 1:
        section = sections[1]
    elif value == 0 and len(sections) > 2:
        section = sections[2]
    section = re.sub(r'"[^"]*"|\\.|_.|\*.|\[[^\]]*\]', "", section)
    lowered = section.lower()
    if not lowered.strip() or "general" in lowered or "@" in lowered:
        return None
    sci = re.search(r"e[+-]", lowered)
    number_part = lowered[: sci.start()] if sci else lowered
    if re.search(r"[ymdhs]", number_part):
        return None
    whole, dot, fraction = number_part.partition(".")
    after_dot = len(re.findall(r"[0#?]", fraction)) if dot else 0
    if sci:
        integer_digits = max(1, len(re.findall(r"[0#?]", whole)))
        exponent = math.floor(math.log10(abs(value))) if value else 0
        if integer_digits > 1:
            exponent -= exponent % integer_digits
        return after_dot - exponent
    percent = 2 * lowered.count("%")
    scaling = re.search(r"[0#?.](,+)[^0#?]*$", number_part)
    thousands = 3 * len(scaling.group(1)) if scaling else 0
    return after_dot + percent - thousands


@pytest.mark.parametrize("seed", range(40))
def test_sections_read_once_equal_the_plain_reading(seed: int) -> None:
    rng = random.Random(seed)
    for _ in range(25):
        number_format = ";".join(rng.choice(PIECES) for _ in range(rng.randint(1, 4)))
        for value in (0.0, 1.5, -1.5, 12345.678, -0.00042, 7e-9, 3.2e11, rng.uniform(-1e4, 1e4)):
            expected = _plain(value, number_format)
            assert precision._format_decimals(value, number_format) == expected, (
                number_format,
                value,
            )
