"""Operators and element-wise application: how a scalar rule extends over arrays."""

from __future__ import annotations

import functools
import math
import operator
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from auditor.evaluation.coerce import _num, _result, _text
from auditor.evaluation.values import _DIV0, _NA, _NUM, MISSING, Fault
from auditor.read.workbook import ErrorValue


def _expand(block: np.ndarray, rows: int, cols: int) -> np.ndarray:
    """Fit a block to rows x cols as array formulas do: repeat a single row or column, pad the
    rest with #N/A."""
    if block.shape == (rows, cols):
        return block
    out = np.full((rows, cols), ErrorValue(_NA), dtype=object)
    src_rows, src_cols = block.shape
    take_rows = rows if src_rows == 1 else min(rows, src_rows)
    take_cols = cols if src_cols == 1 else min(cols, src_cols)
    row_idx = np.zeros(take_rows, dtype=int) if src_rows == 1 else np.arange(take_rows)
    col_idx = np.zeros(take_cols, dtype=int) if src_cols == 1 else np.arange(take_cols)
    out[:take_rows, :take_cols] = block[np.ix_(row_idx, col_idx)]
    return out


def _guarded(fn: Callable[..., Any], args: Sequence[Any]) -> Any:
    try:
        return _result(fn(*args))
    except Fault as fault:
        return ErrorValue(fault.code)


def _lift(fn: Callable[..., Any], args: Sequence[Any]) -> Any:
    """Apply a scalar function, element by element when any argument is an array."""
    blocks = [a for a in args if isinstance(a, np.ndarray)]
    if not blocks:
        return _guarded(fn, args)
    rows = max(b.shape[0] for b in blocks)
    cols = max(b.shape[1] for b in blocks)
    fitted = [_expand(a, rows, cols) if isinstance(a, np.ndarray) else a for a in args]
    out = np.empty((rows, cols), dtype=object)
    for i in range(rows):
        for j in range(cols):
            out[i, j] = _guarded(fn, [a[i, j] if isinstance(a, np.ndarray) else a for a in fitted])
    return out


def _float_block(value: Any) -> np.ndarray | float | None:
    """A float array (or float) when every element is a number, for the fast numpy path."""
    if type(value) is float:
        return value
    if isinstance(value, np.ndarray) and all(type(v) is float for v in value.flat):
        return value.astype(float)
    return None


# --- operators -----------------------------------------------------------------------------------


def _arith(op: str, left: Any, right: Any) -> float:
    x, y = _num(left), _num(right)
    if op == "+":
        return x + y
    if op == "-":
        return x - y
    if op == "*":
        return x * y
    if op == "/":
        if y == 0:
            raise Fault(_DIV0)
        return x / y
    if x == 0 and y == 0:
        raise Fault(_NUM)  # Excel; LibreOffice gives 1
    if x == 0 and y < 0:
        raise Fault(_DIV0)
    if x < 0 and y != int(y):
        raise Fault(_NUM)
    try:
        return math.pow(x, y)
    except OverflowError as exc:
        raise Fault(_NUM) from exc


_RANK = {float: 0, str: 1, bool: 2}  # numbers sort before text, text before logicals


def _compare(op: str, left: Any, right: Any) -> bool:
    for value in (left, right):
        if type(value) is ErrorValue:
            raise Fault(value.code)
    blank = {float: 0.0, str: "", bool: False}
    if left in (None, MISSING):
        left = blank.get(type(right), 0.0)
    if right in (None, MISSING):
        right = blank.get(type(left), 0.0)
    ranks = (_RANK.get(type(left), 0), _RANK.get(type(right), 0))
    a: Any
    b: Any
    if ranks[0] != ranks[1]:
        a, b = ranks
    elif isinstance(left, str):
        a, b = left.casefold(), right.casefold()
    else:
        a, b = left, right
    return bool(_COMPARISONS[op](a, b))


_COMPARISONS: dict[str, Callable[[Any, Any], Any]] = {
    "=": operator.eq,
    "<>": operator.ne,
    "<": operator.lt,
    "<=": operator.le,
    ">": operator.gt,
    ">=": operator.ge,
}


def _binary(op: str, left: Any, right: Any) -> Any:
    if op == "&":
        return _lift(lambda a, b: _text(a) + _text(b), (left, right))
    scalar = functools.partial(_arith if op in ("+", "-", "*", "/", "^") else _compare, op)
    fast_left, fast_right = _float_block(left), _float_block(right)
    big = isinstance(left, np.ndarray) or isinstance(right, np.ndarray)
    if big and fast_left is not None and fast_right is not None:
        try:
            fast = _numpy_binary(op, fast_left, fast_right)
        except ValueError:  # shapes numpy cannot broadcast: the general path pads with #N/A
            fast = None
        if fast is not None:
            return fast
    return _lift(scalar, (left, right))


_NUMPY_OPS: dict[str, Callable[[Any, Any], Any]] = {
    "+": np.add,
    "-": np.subtract,
    "*": np.multiply,
    "/": np.divide,
    "^": np.power,
    "=": np.equal,
    "<>": np.not_equal,
    "<": np.less,
    "<=": np.less_equal,
    ">": np.greater,
    ">=": np.greater_equal,
}


def _numpy_binary(op: str, left: Any, right: Any) -> np.ndarray | None:
    with np.errstate(all="ignore"):
        out = _NUMPY_OPS[op](left, right)
    if out.dtype == bool:
        return np.asarray(out, dtype=object)
    if op == "^" or not np.isfinite(out).all():
        return None  # zero divisors and powers need the error rules of the scalar path
    return np.asarray(out, dtype=object)
