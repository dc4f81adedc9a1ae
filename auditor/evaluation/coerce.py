"""A value as arithmetic, logic or text sees it, and a function's result as a cell shows it."""

from __future__ import annotations

import math
import re
from itertools import compress, count, repeat
from operator import is_
from typing import Any

import numpy as np

from auditor.evaluation.values import _NUM, _VALUE, MISSING, Fault, RangeValue, _Numeric
from auditor.read.workbook import ErrorValue

# A number typed as text: "12.5", " 3 ", "1e3", "50%", "1,000" (groups of three).
_NUMERIC_TEXT = re.compile(
    r"^\s*([+-]?(?:\d{1,3}(?:,\d{3})+(?:\.\d*)?|\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(%?)\s*$"
)


def _text_to_number(text: str) -> float | None:
    match = _NUMERIC_TEXT.match(text)
    if match is None:
        return None
    number = float(match.group(1).replace(",", ""))
    return number / 100 if match.group(2) else number


def _num(value: Any) -> float:
    """A scalar as arithmetic sees it: TRUE is 1, empty is 0, text must look like a number."""
    kind = type(value)
    if kind is float or kind is bool or kind is int:
        return float(value)
    if value is None or value is MISSING:
        return 0.0
    if kind is ErrorValue:
        raise Fault(value.code)
    if kind is str:
        number = _text_to_number(value)
        if number is None:
            raise Fault(_VALUE)
        return number
    raise Fault(_VALUE)


def _int(value: Any) -> int:
    return math.trunc(_num(value))


def _truthy(value: Any) -> bool:
    if type(value) is ErrorValue:
        raise Fault(value.code)
    if isinstance(value, str):
        if value.upper() in ("TRUE", "FALSE"):
            return value.upper() == "TRUE"
        raise Fault(_VALUE)
    return bool(_num(value))


def _general_text(number: float) -> str:
    """A number as '&' writes it: up to 15 significant digits, no trailing zeros."""
    if math.isfinite(number) and number == int(number) and abs(number) < 1e15:
        return str(int(number))
    text = f"{number:.15G}"
    if "E" in text:
        mantissa, exponent = text.split("E")
        mantissa = mantissa.rstrip("0").rstrip(".") if "." in mantissa else mantissa
        sign = "-" if exponent.startswith("-") else "+"
        return f"{mantissa}E{sign}{exponent.lstrip('+-').zfill(2)}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def _text(value: Any) -> str:
    if type(value) is ErrorValue:
        raise Fault(value.code)
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, str):
        return value
    if value is None or value is MISSING:
        return ""
    return _general_text(_num(value))


def _result(value: Any) -> Any:
    """numpy scalars to Python, non-finite numbers to #NUM!."""
    if isinstance(value, np.generic):
        value = value.item()
    if type(value) is int:
        value = float(value)
    if type(value) is float:
        if not math.isfinite(value):
            return ErrorValue(_NUM)
        return value + 0.0  # no negative zero: spreadsheets show 0
    return value


def _as_2d(value: Any) -> np.ndarray:
    if isinstance(value, RangeValue):
        return value.values
    if isinstance(value, np.ndarray):
        return value
    block = np.empty((1, 1), dtype=object)
    block[0, 0] = value
    return block


def _numeric_view(value: Any) -> _Numeric:
    if isinstance(value, RangeValue):
        return value.numeric()
    return _Numeric.of(_as_2d(value))


def _non_negative(value: Any) -> float:
    x = _num(value)
    if x < 0:
        raise Fault(_NUM)  # Excel; LibreOffice writes #VALUE!
    return x


def _positive(value: Any) -> float:
    x = _num(value)
    if x <= 0:
        raise Fault(_NUM)
    return x


def _constant(value: Any) -> Any:
    """A typed cell value as formulas see it: every number a Python float."""
    kind = type(value)
    if kind is float or kind is str or kind is bool or value is None:
        return value
    if kind is int:
        return float(value)
    if isinstance(value, np.generic):  # workbooks built in memory may carry numpy scalars
        return _constant(value.item())
    return value


# The kinds of typed value _constant gives back as they are.
_AS_THEY_ARE = frozenset({float, str, bool, type(None), ErrorValue})


def constants(values: list[Any]) -> list[Any]:
    """``_constant`` of each value; the list itself when every value stays as it is. The
    values' types are looked at in C (one pass, and one more per kind to change), and only the
    cells of a kind that changes (ints, numpy scalars) go through ``_constant``."""
    to_change = set(map(type, values)) - _AS_THEY_ARE
    if not to_change:
        return values
    out = list(values)
    for kind in to_change:
        for index in compress(count(), map(is_, map(type, values), repeat(kind))):
            out[index] = _constant(values[index])
    return out
