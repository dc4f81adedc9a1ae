"""Scalar arithmetic functions: SQRT, LN, LOG, EXP, ROUND and the like."""

from __future__ import annotations

import math
from decimal import ROUND_HALF_UP, Decimal, localcontext
from typing import Any

from auditor.evaluation.coerce import _int, _non_negative, _num, _positive
from auditor.evaluation.operators import _arith
from auditor.evaluation.values import _DIV0, _NUM, MISSING, Fault, ScalarFn


def _round(x: Any, digits: Any) -> float:
    value, places = _num(x), _int(digits)
    if places > 15:
        return value
    with localcontext() as context:
        context.prec = 60
        exact = Decimal(repr(value))  # the shortest decimal, as the cell displays it
        return float(exact.quantize(Decimal(1).scaleb(-places), rounding=ROUND_HALF_UP))


def _exp(x: Any) -> float:
    try:
        return math.exp(_num(x))
    except OverflowError as exc:
        raise Fault(_NUM) from exc


def _log(x: Any, base: Any = 10.0) -> float:
    value, base_value = _positive(x), (10.0 if base is MISSING else _positive(base))
    if base_value == 1:
        raise Fault(_DIV0)
    return math.log(value) / math.log(base_value)


SCALAR: dict[str, tuple[ScalarFn, int, int]] = {
    "SQRT": (lambda x: math.sqrt(_non_negative(x)), 1, 1),
    "ABS": (lambda x: abs(_num(x)), 1, 1),
    "LN": (lambda x: math.log(_positive(x)), 1, 1),
    "LOG10": (lambda x: math.log10(_positive(x)), 1, 1),
    "LOG": (_log, 1, 2),
    "EXP": (_exp, 1, 1),
    "INT": (lambda x: float(math.floor(_num(x))), 1, 1),
    "POWER": (lambda x, y: _arith("^", x, y), 2, 2),
    "ROUND": (_round, 2, 2),
    "ISNUMBER": (lambda v: type(v) is float, 1, 1),
}
