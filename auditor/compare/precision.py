"""Precision-aware agreement between a reported value and the true (recomputed) one.

A value is judged at the precision it carries, and every judgement says in words which tolerance
it used, so a reviewer can see why a value passed:

* a formula's **stored** value is the engine's own double: it agrees within ~1e-9 relative
  (engines differ in summation order, and files may keep only 15 significant digits);
* a **typed** constant carries only the digits the author typed or the number format shows: it
  agrees when it equals the true value rounded to those digits, within half a unit in the last
  place (plus 1e-12 relative for the binary representation of decimal fractions);
* a **text** claim (``<0.001``, ``p < .05``, ``n.s.``) agrees when the claim holds for the true
  value; a number written as text is judged like a typed constant, at the digits it shows.
"""

from __future__ import annotations

import math
import re
import sys
from dataclasses import dataclass
from functools import lru_cache

# Binary doubles cannot hold most decimal fractions exactly: 0.1 + 0.2 != 0.3.
REPRESENTATION_SLACK = 1e-12

# Conventional significance level behind the words "significant" and "n.s." (common practice).
CONVENTIONAL_ALPHA = 0.05
MAX_EXPONENT = sys.float_info.max_10_exp  # 10.0 ** 309 overflows
STAR_LEVELS = {"*": 0.05, "**": 0.01, "***": 0.001}  # common practice in published tables

MINUS_SIGNS = "\u2212\u2012\u2013\ufe63\uff0d"  # minus sign, figure dash, en dash, small, wide
SPACES = "\u00a0\u202f\u2009"  # no-break, narrow no-break and thin spaces inside numbers
# A mantissa with at least one digit (ASCII only: "E-01" is an id, "٣" is not typed as 3).
NUMBER = re.compile(
    r"[+-]?(?:(?:\d{1,3}(?:,\d{3})+|\d+)(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?", re.ASCII
)
# An optional "p" / "p-value" label, an optional comparison, then a number: "p < .05", "≥0.1".
CLAIM = re.compile(r"(?:p(?:[\s-]*values?)?\s*)?(?P<op><=|>=|<|>|=|:)?\s*(?P<num>.+)")
# Compared without trailing dots: "n.s." and "sig." match "n.s" and "sig".
NOT_SIGNIFICANT = {"n.s", "ns", "not significant", "not sig", "non-significant", "nonsignificant"}
SIGNIFICANT = {"significant", "sig", "statistically significant"}
OPERATORS = {"<": "<", ">": ">", "<=": "≤", ">=": "≥"}


@dataclass(frozen=True)
class Agreement:
    agrees: bool | None  # None when it cannot be judged
    tolerance: str  # in words: "1e-09 relative", "±0.0005 (3 decimals shown)", "claim p < 0.001"
    allowed: float | None  # the absolute tolerance used, when numeric


def agree_stored(
    reported: float, true: float, rel: float = 1e-9, scale: float | None = None
) -> Agreement:
    """A formula's stored value: |reported − true| ≤ rel · max(|true|, scale)."""
    if not (_finite(reported) and _finite(true)):
        return Agreement(None, "no number to compare", None)
    # The floor is named only where it decides: for a value nearer zero than the floor.
    tolerance = stored_tolerance_words(rel, scale if scale and abs(true) < scale else None)
    # The floor keeps a value that should be near 0 (an intercept through the origin) judgeable.
    allowed = rel * max(abs(true), scale or 0.0)
    return Agreement(abs(reported - true) <= allowed, tolerance, allowed)


def stored_tolerance_words(rel: float, scale: float | None = None) -> str:
    """How a stored value is judged, as a reviewer says it: "the same to 9 significant digits"
    (rel 1e-9); near zero, measured against ``scale`` (relative precision means nothing there)."""
    digits = max(1, round(-math.log10(rel))) if rel > 0 else 15
    words = f"the same to {digits} significant digits"
    if scale is not None:
        words += f" (differences near zero measured against {scale:.3g})"
    return words


def agree_typed(reported: float, true: float, number_format: str = "General") -> Agreement:
    """A typed constant: equal to the true value at the digits it shows, within half a unit."""
    if not (_finite(reported) and _finite(true)):
        return Agreement(None, "no number to compare", None)
    return _at_decimals(reported, true, decimals_shown(reported, number_format))


def agree_text(claim: str, true: float, label: str = "p") -> Agreement:
    """A claim written as text holds for the true value (``label`` names it in the tolerance)."""
    if not _finite(true):
        return Agreement(None, "no number to compare", None)
    text = _normalise(claim)
    words = " ".join(text.lower().rstrip(" .").split())
    if words in NOT_SIGNIFICANT:
        bound = f"claim {label} ≥ {CONVENTIONAL_ALPHA:g} (not significant)"
        return Agreement(true >= CONVENTIONAL_ALPHA, bound, None)
    if words in SIGNIFICANT:
        bound = f"claim {label} < {CONVENTIONAL_ALPHA:g} (significant)"
        return Agreement(true < CONVENTIONAL_ALPHA, bound, None)
    if text in STAR_LEVELS:
        level = STAR_LEVELS[text]
        return Agreement(true < level, f"claim {label} < {level:g} ({text})", None)
    match = CLAIM.fullmatch(text.lower().rstrip("*").strip())
    if match is None:
        return _not_understood(claim)
    op = match.group("op") or "="
    number_text = match.group("num").strip()
    value = parse_text_number(number_text)
    if value is None:
        return _not_understood(claim)
    if op in ("=", ":"):
        decimals = _text_decimals(number_text)
        if decimals < -MAX_EXPONENT:  # "0E310": a unit of rounding beyond any float
            return _not_understood(claim)
        return _at_decimals(value, true, decimals)
    holds = {"<": true < value, ">": true > value, "<=": true <= value, ">=": true >= value}[op]
    return Agreement(holds, f"claim {label} {OPERATORS[op]} {value:g}", None)


def decimals_shown(value: float, number_format: str) -> int:
    """Decimals carried by a typed value: of its shortest repr or of its format, whichever is more.

    Negative when only tens, hundreds, … are shown (1e+22 typed, or a format "0.00E+00" on 12345).
    """
    typed = _repr_decimals(value)
    formatted = _format_decimals(value, number_format)
    return typed if formatted is None else max(typed, formatted)


def parse_text_number(text: str) -> float | None:
    """A number written as text, as a spreadsheet user would read it; None if it is not one."""
    if not isinstance(text, str):
        return None
    cleaned = _normalise(text)
    negate = False
    if cleaned.startswith("(") and cleaned.endswith(")"):
        cleaned, negate = cleaned[1:-1].strip(), True  # accounting style (1.5) means -1.5
    factor = 1.0
    if cleaned.endswith("%"):
        cleaned, factor = cleaned[:-1].rstrip(), 0.01
    # fullmatch on a digit-bearing pattern: float() alone would accept "nan", "inf" and "1_000".
    if not any(ch.isdigit() for ch in cleaned) or not NUMBER.fullmatch(cleaned):
        return None
    number = float(cleaned.replace(",", "")) * factor
    if not math.isfinite(number):
        return None  # "1e999": no spreadsheet number
    return -number if negate else number


# --- helpers ------------------------------------------------------------------------------------


def _finite(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _at_decimals(reported: float, true: float, decimals: int) -> Agreement:
    half_unit = 0.5 * 10.0 ** (-decimals)
    allowed = half_unit + REPRESENTATION_SLACK * max(abs(true), abs(reported))
    if decimals >= 0:
        words = f"the same when rounded to the {decimals} decimal(s) shown"
    else:
        words = f"the same when rounded to the nearest {10.0 ** (-decimals):g}, as shown"
    return Agreement(abs(reported - true) <= allowed, words, allowed)


def _not_understood(claim: str) -> Agreement:
    return Agreement(None, f"text not understood: {claim!r}", None)


def _normalise(text: str) -> str:
    for minus in MINUS_SIGNS:
        text = text.replace(minus, "-")
    for space in SPACES:
        text = text.replace(space, " ")
    return text.replace("≤", "<=").replace("≥", ">=").strip()


def _repr_decimals(value: float) -> int:
    if isinstance(value, int):
        return 0
    mantissa, _, exponent = repr(abs(float(value))).partition("e")
    whole, _, fraction = mantissa.partition(".")
    if fraction == "0":
        fraction = ""  # repr(18.0) == "18.0": an integer typed as 18 carries no decimals
    return len(fraction) - (int(exponent) if exponent else 0)


def _text_decimals(number_text: str) -> int:
    """Decimals a number written as text shows; its trailing zeros count (they were typed)."""
    cleaned = _normalise(number_text).strip("()")
    percent = 2 if cleaned.endswith("%") else 0
    mantissa, _, exponent = cleaned.rstrip("% ").lower().partition("e")
    fraction = mantissa.partition(".")[2]
    return len(fraction) + percent - (int(exponent) if exponent else 0)


@dataclass(frozen=True)
class _Shown:
    """What one section of a number format shows: its decimals (percent and thousands scaling
    counted in), or for scientific notation its decimals and its integer placeholders."""

    decimals: int
    scientific: bool = False
    integer_digits: int = 1


def _format_decimals(value: float, number_format: str) -> int | None:
    """Decimals a number format shows for this value; None for General, text and dates."""
    sections = _sections_shown(number_format or "General")
    shown = sections[_section_of(len(sections), value)]
    if shown is None or not shown.scientific:
        return None if shown is None else shown.decimals
    exponent = math.floor(math.log10(abs(value))) if value else 0
    if shown.integer_digits > 1:
        # Engineering style ("##0.0E+0"): the exponent is a multiple of the integer
        # placeholders (from memory of the spreadsheet's number-format rules).
        exponent -= exponent % shown.integer_digits
    return shown.decimals - exponent


def _section_of(count: int, value: float) -> int:
    """Which section of "pos;neg;zero;text" shows this value."""
    if value < 0 and count > 1:
        return 1
    if value == 0 and count > 2:
        return 2
    return 0


@lru_cache(maxsize=1024)
def _sections_shown(number_format: str) -> tuple[_Shown | None, ...]:
    """What each section of a number format shows, read once per format (a workbook uses a
    few formats over thousands of cells)."""
    sections: list[str] = re.findall(r'(?:"[^"]*"|\\.|\[[^\]]*\]|[^;"\\\[])+', number_format)
    return tuple(_section_shown(section) for section in sections or [""])


def _section_shown(section: str) -> _Shown | None:
    # Literal text, escapes, padding, fill and [colour]/[condition]/[locale] show no digits.
    section = re.sub(r'"[^"]*"|\\.|_.|\*.|\[[^\]]*\]', "", section)
    lowered = section.lower()
    if not lowered.strip() or "general" in lowered or "@" in lowered:
        return None
    sci = re.search(r"e[+-]", lowered)
    number_part = lowered[: sci.start()] if sci else lowered
    if re.search(r"[ymdhs]", number_part):
        return None  # a date or time format: the value is not shown as a decimal number
    whole, dot, fraction = number_part.partition(".")
    after_dot = len(re.findall(r"[0#?]", fraction)) if dot else 0
    if sci:
        return _Shown(after_dot, True, max(1, len(re.findall(r"[0#?]", whole))))
    percent = 2 * lowered.count("%")
    scaling = re.search(r"[0#?.](,+)[^0#?]*$", number_part)  # "0.0," shows thousands
    thousands = 3 * len(scaling.group(1)) if scaling else 0
    return _Shown(after_dot + percent - thousands)
