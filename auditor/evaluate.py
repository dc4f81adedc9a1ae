"""The "as written" value of a cell: its formula evaluated with the spreadsheet's own semantics.

Excel's behaviour is the target, because the audited files come from it. Where LibreOffice (the
engine the tests check against) differs, the tests name the difference: it writes its "invalid
argument" error as ``#VALUE!`` where Excel says ``#NUM!``, it has no logical type, and it refuses
typed text in SUM.

How evaluation runs:

* Formula cells are evaluated once and memoised. Before a cell is evaluated, the formula cells its
  references reach are evaluated first, depth-first from an explicit stack, so that a chain of
  10,000 dependent cells needs no deep recursion. A cell met again while it is still open is part
  of a cycle and reads as ``#CYCLE!``.
* A reference evaluates to a :class:`RangeValue` (the block and its cells as a 2-D object array,
  read once and cached). Functions that take ranges see the block; operators and scalar functions
  see, in a normal cell, the implicit intersection with the formula's row or column, and in an
  array formula the whole block, element by element.
* Spreadsheet errors raised inside the functions (:class:`Fault`) become :class:`ErrorValue`
  results. Constructs the evaluator does not know raise :class:`Unsupported`; references to
  other workbooks raise :class:`Unverifiable`, a kind of Unsupported.

The numerical work (least squares, distributions) is numpy and scipy; the code here decides which
cells take part and which error a spreadsheet would show.
"""

from __future__ import annotations

import bisect
import functools
import math
import operator
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from decimal import ROUND_HALF_UP, Decimal, localcontext
from typing import Any

import numpy as np
from scipy import linalg, stats

from auditor.errors import FormulaError
from auditor.formula import (
    SHEET_COLS,
    SHEET_ROWS,
    ArrayNode,
    Binary,
    Bool,
    Call,
    ErrorLit,
    Missing,
    NameNode,
    Node,
    Number,
    Percent,
    Ref,
    RefNode,
    Text,
    Unary,
    parse,
    references,
)
from auditor.workbook import Cell, ErrorValue, Workbook, column_letter, parse_cell

Value = float | str | bool | ErrorValue | None | np.ndarray

CYCLE = ErrorValue("#CYCLE!")  # no spreadsheet error code exists for it; Excel shows 0 and warns
_NA, _VALUE, _NUM, _DIV0, _REF = "#N/A", "#VALUE!", "#NUM!", "#DIV/0!", "#REF!"


class Unsupported(Exception):
    """A function or construct the evaluator does not evaluate; the message names it."""


class Unverifiable(Unsupported):
    """The formula reads another workbook, which is not at hand."""


class Fault(Exception):
    """A spreadsheet error raised inside a function; it becomes an ErrorValue."""

    def __init__(self, code: str) -> None:
        super().__init__(code)
        self.code = code


class _MissingArg:
    """An empty argument (``LINEST(y, x, , TRUE)``): 0 for arithmetic, the default otherwise."""

    def __repr__(self) -> str:
        return "MISSING"


MISSING = _MissingArg()


@dataclass
class RangeValue:
    """A reference as a function argument sees it: the block and its cells' values."""

    ref: Ref
    values: np.ndarray  # 2-D object array; None for an empty cell
    _numeric: _Numeric | None = None

    def numeric(self) -> _Numeric:
        if self._numeric is None:
            self._numeric = _Numeric.of(self.values)
        return self._numeric


@dataclass(frozen=True)
class _Numeric:
    """The numbers of a block, flattened row by row, and its first error."""

    values: np.ndarray  # float64, NaN where the cell is not a number
    is_number: np.ndarray  # bool; logicals and text-numbers are not numbers here
    error_at: int  # index of the first error value, or -1
    error: ErrorValue | None

    @staticmethod
    def of(block: np.ndarray) -> _Numeric:
        flat = block.ravel()
        is_number = np.fromiter((type(v) is float for v in flat), dtype=bool, count=flat.size)
        values = np.full(flat.size, np.nan)
        values[is_number] = flat[is_number].astype(float)
        is_error = np.fromiter((type(v) is ErrorValue for v in flat), dtype=bool, count=flat.size)
        error_at = int(np.argmax(is_error)) if is_error.any() else -1
        error = flat[error_at] if error_at >= 0 else None
        return _Numeric(values, is_number, error_at, error)


@dataclass(frozen=True)
class _Ctx:
    sheet: str
    row: int | None = None  # the formula's own cell, for implicit intersection
    col: int | None = None
    array: bool = False  # inside an array formula (or SUMPRODUCT): operate element-wise


class _Defer(Exception):
    """A formula needs a cell not yet evaluated (found through OFFSET or INDEX)."""

    def __init__(self, key: tuple[str, int, int]) -> None:
        super().__init__(key)
        self.key = key


@dataclass(frozen=True)
class _Failed:
    """A cell whose formula could not be evaluated; reading it re-raises."""

    error: Exception


# --- coercions -----------------------------------------------------------------------------------

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


# --- element-wise machinery ----------------------------------------------------------------------


def _as_2d(value: Any) -> np.ndarray:
    if isinstance(value, RangeValue):
        return value.values
    if isinstance(value, np.ndarray):
        return value
    block = np.empty((1, 1), dtype=object)
    block[0, 0] = value
    return block


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


# --- statistics over ranges ----------------------------------------------------------------------


def _numeric_view(value: Any) -> _Numeric:
    if isinstance(value, RangeValue):
        return value.numeric()
    return _Numeric.of(_as_2d(value))


def _pairs(known_y: Any, known_x: Any) -> tuple[np.ndarray, np.ndarray]:
    """The (y, x) pairs SLOPE and its kin use: both cells numbers; text, logicals, blanks drop."""
    y_view, x_view = _numeric_view(known_y), _numeric_view(known_x)
    if y_view.values.size != x_view.values.size:
        raise Fault(_NA)  # Excel; LibreOffice writes #VALUE!
    errors = [(v.error_at, v.error) for v in (y_view, x_view) if v.error is not None]
    if errors:
        raise Fault(min(errors, key=lambda e: e[0])[1].code)
    keep = y_view.is_number & x_view.is_number
    return y_view.values[keep], x_view.values[keep]


@dataclass(frozen=True)
class _Moments:
    n: int
    x_mean: float
    y_mean: float
    sxx: float
    syy: float
    sxy: float
    ssresid: float  # residual sum of squares about the fitted line (NaN when Sxx is 0)

    @staticmethod
    def of(known_y: Any, known_x: Any) -> _Moments:
        y, x = _pairs(known_y, known_x)
        if y.size == 0:
            raise Fault(_DIV0)
        dx, dy = x - x.mean(), y - y.mean()  # two-pass sums: no cancellation in Sxx
        sxx, syy, sxy = float(dx @ dx), float(dy @ dy), float(dx @ dy)
        residuals = dy - (sxy / sxx) * dx if sxx > 0 else np.full(1, np.nan)
        return _Moments(
            y.size, float(x.mean()), float(y.mean()), sxx, syy, sxy, float(residuals @ residuals)
        )

    @property
    def slope(self) -> float:
        if self.sxx == 0:
            raise Fault(_DIV0)
        return self.sxy / self.sxx


def _collect(args: Sequence[Any]) -> np.ndarray:
    """Numbers for SUM, AVERAGE, STDEV ...: ranges give their numbers only (text, logicals
    ignored); typed arguments count as arithmetic sees them (TRUE is 1, "3" is 3)."""
    chunks: list[np.ndarray] = []
    for arg in args:
        if isinstance(arg, RangeValue | np.ndarray):
            view = _numeric_view(arg)
            if view.error is not None:
                raise Fault(view.error.code)
            chunks.append(view.values[view.is_number])
        else:
            chunks.append(np.array([_num(arg)]))
    return np.concatenate(chunks) if chunks else np.zeros(0)


def _devsq(numbers: np.ndarray) -> float:
    centred = numbers - numbers.mean()
    return float(centred @ centred)


def _variance(args: Sequence[Any], ddof: int) -> float:
    numbers = _collect(args)
    if numbers.size <= ddof or numbers.size == 0:
        raise Fault(_DIV0)
    return _devsq(numbers) / (numbers.size - ddof)


def _count(args: Sequence[Any]) -> float:
    total = 0
    for arg in args:
        if isinstance(arg, RangeValue | np.ndarray):
            total += int(_numeric_view(arg).is_number.sum())
        elif type(arg) in (float, bool) or arg is MISSING:
            total += 1
        elif isinstance(arg, str) and _text_to_number(arg) is not None:
            total += 1
    return float(total)


def _counta(args: Sequence[Any]) -> float:
    total = 0
    for arg in args:
        if isinstance(arg, RangeValue | np.ndarray):
            total += sum(v is not None for v in _as_2d(arg).flat)
        else:
            total += 1
    return float(total)


# --- LINEST --------------------------------------------------------------------------------------


def _numeric_block(value: Any) -> np.ndarray:
    """A block for LINEST and TREND: every cell must be a number (errors propagate)."""
    view = _numeric_view(value)
    if view.error is not None:
        raise Fault(view.error.code)
    if not view.is_number.all():
        raise Fault(_VALUE)
    return view.values.reshape(_as_2d(value).shape)


def _design(known_y: Any, known_x: Any) -> tuple[np.ndarray, np.ndarray]:
    """(y as n, X as n x k) from LINEST's arguments; the x variables are the columns of x for a
    column of y and the rows of x for a row of y."""
    y_block = _numeric_block(known_y)
    n_rows, n_cols = y_block.shape
    if known_x is MISSING:
        n = y_block.size
        return y_block.ravel(), np.arange(1.0, n + 1).reshape(n, 1)
    x_block = _numeric_block(known_x)
    if n_cols == 1 and x_block.shape[0] == n_rows:
        return y_block[:, 0], x_block
    if n_rows == 1 and x_block.shape[1] == n_cols:
        return y_block[0, :], x_block.T
    if x_block.shape == y_block.shape:
        return y_block.ravel(), x_block.reshape(-1, 1)
    raise Fault(_REF)  # Excel; LibreOffice writes #VALUE!


@dataclass(frozen=True)
class _Fit:
    coef: np.ndarray  # in the order of the x columns
    intercept: float
    se: np.ndarray
    se_intercept: float | None
    r2: float
    sey: float
    f: float | None
    df: int
    ssreg: float
    ssresid: float


def _independent_columns(xc: np.ndarray) -> list[int]:
    """The x columns kept after Excel's collinearity rule: a column that is (numerically) a
    combination of the others is removed and reported with coefficient 0 and error 0."""
    if xc.shape[1] == 0:
        return []
    _, r, pivots = linalg.qr(xc, mode="economic", pivoting=True)
    diag = np.abs(np.diag(r))
    if diag.size == 0 or diag[0] == 0:
        return []
    tolerance = diag[0] * max(xc.shape) * 1e-13
    return sorted(int(p) for p in pivots[: int((diag > tolerance).sum())])


def _least_squares(y: np.ndarray, x: np.ndarray, const: bool) -> _Fit:
    n, k = x.shape
    x_mean = x.mean(axis=0) if const else np.zeros(k)
    y_mean = float(y.mean()) if const else 0.0
    xc, yc = x - x_mean, y - y_mean  # centring keeps the problem well conditioned
    kept = _independent_columns(xc)
    rank = len(kept)
    df = n - rank - (1 if const else 0)
    if rank == 0 or df < 0:
        raise Fault(_NUM)
    q, r = np.linalg.qr(xc[:, kept])
    coef = np.zeros(k)
    coef[kept] = linalg.solve_triangular(r, q.T @ yc)
    fitted = xc @ coef
    resid = yc - fitted
    ssresid = float(resid @ resid)
    ssreg = float(fitted @ fitted)  # about the mean when const: the centred model's fit
    sstotal = ssreg + ssresid
    sigma2 = ssresid / df if df > 0 else 0.0  # LibreOffice reports zero errors at df = 0
    r_inv = linalg.solve_triangular(r, np.eye(rank))
    unscaled = np.zeros((k, k))
    unscaled[np.ix_(kept, kept)] = r_inv @ r_inv.T
    se = np.sqrt(np.diag(unscaled) * sigma2)
    se_intercept = None
    if const:
        se_intercept = math.sqrt(sigma2 * (1.0 / n + float(x_mean @ unscaled @ x_mean)))
    f_stat = (ssreg / rank) / (ssresid / df) if df > 0 and ssresid > 0 else None
    intercept = y_mean - float(x_mean @ coef) if const else 0.0
    r2 = ssreg / sstotal if sstotal > 0 else 1.0  # a constant y: LibreOffice reports 1
    return _Fit(
        coef, intercept, se, se_intercept, r2, math.sqrt(sigma2), f_stat, df, ssreg, ssresid,
    )  # fmt: skip


def _linest_table(fit: _Fit, with_stats: bool) -> np.ndarray:
    k = fit.coef.size
    na = ErrorValue(_NA)
    table = np.full((5 if with_stats else 1, k + 1), na, dtype=object)
    table[0, :k] = [float(c) for c in fit.coef[::-1]]  # the x columns in reverse order
    table[0, k] = fit.intercept
    if with_stats:
        table[1, :k] = [float(s) for s in fit.se[::-1]]
        table[1, k] = na if fit.se_intercept is None else fit.se_intercept
        table[2, :2] = [fit.r2, fit.sey]
        table[3, :2] = [na if fit.f is None else fit.f, float(fit.df)]
        table[4, :2] = [fit.ssreg, fit.ssresid]
    return table


def _flag(args: Sequence[Any], index: int, default: bool) -> bool:
    if len(args) <= index or args[index] is MISSING:
        return default
    value = args[index]
    if isinstance(value, RangeValue | np.ndarray):
        value = _as_2d(value)[0, 0]
    return _truthy(value)


# --- functions -----------------------------------------------------------------------------------
# Three kinds. Scalar functions take scalars (element-wise over arrays) and raise Fault for an
# error; ranged functions take the evaluated arguments as they are (a RangeValue for a
# reference); lazy functions take the argument nodes (IF evaluates one branch only).

ScalarFn = Callable[..., Any]
RangedFn = Callable[["Evaluator", list[Any], _Ctx], Any]
LazyFn = Callable[["Evaluator", tuple[Node, ...], _Ctx], Any]

_SCALAR: dict[str, tuple[ScalarFn, int, int]] = {}
_RANGED: dict[str, tuple[RangedFn, int, int]] = {}
_LAZY: dict[str, tuple[LazyFn, int, int]] = {}


def _df(value: Any) -> int:
    """Degrees of freedom as the spreadsheet takes them: truncated, at least 1."""
    df = _int(value)
    if df < 1:
        raise Fault(_NUM)
    return df


def _probability(value: Any, *, upper_closed: bool) -> float:
    p = _num(value)
    if p <= 0 or p > 1 or (p == 1 and not upper_closed):
        raise Fault(_NUM)
    return p


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


def _tdist(x: Any, df: Any, tails: Any) -> float:
    x_value, df_value, tail_count = _non_negative(x), _df(df), _int(tails)
    if tail_count not in (1, 2):
        raise Fault(_NUM)
    return tail_count * float(stats.t.sf(x_value, df_value))


def _t_dist(x: Any, df: Any, cumulative: Any) -> float:
    value, degrees, cumulative_flag = _num(x), _df(df), _truthy(cumulative)
    if cumulative_flag:
        return float(stats.t.cdf(value, degrees))  # the left tail
    return float(stats.t.pdf(value, degrees))


def _t_inv_two_tailed(p: Any, df: Any) -> float:
    """TINV and T.INV.2T take the two-tailed probability: the t with P(|T| > t) = p."""
    return float(stats.t.isf(_probability(p, upper_closed=True) / 2, _df(df)))


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


def _f_args(x: Any, df1: Any, df2: Any) -> tuple[float, int, int]:
    return _non_negative(x), _df(df1), _df(df2)


def _f_dist(x: Any, df1: Any, df2: Any, cumulative: Any) -> float:
    value, d1, d2 = _f_args(x, df1, df2)
    if _truthy(cumulative):
        return float(stats.f.cdf(value, d1, d2))
    return float(stats.f.pdf(value, d1, d2))


def _f_inv_rt(p: Any, df1: Any, df2: Any) -> float:
    return float(stats.f.isf(_probability(p, upper_closed=True), _df(df1), _df(df2)))


_SCALAR.update(
    {
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
        "T.DIST": (_t_dist, 3, 3),
        "T.DIST.2T": (lambda x, df: 2 * stats.t.sf(_non_negative(x), _df(df)), 2, 2),
        "T.DIST.RT": (lambda x, df: stats.t.sf(_num(x), _df(df)), 2, 2),
        "TDIST": (_tdist, 3, 3),
        "T.INV": (lambda p, df: stats.t.ppf(_probability(p, upper_closed=False), _df(df)), 2, 2),
        "T.INV.2T": (_t_inv_two_tailed, 2, 2),
        "TINV": (_t_inv_two_tailed, 2, 2),
        "NORM.S.DIST": (
            lambda z, cum: (stats.norm.cdf if _truthy(cum) else stats.norm.pdf)(_num(z)),
            2,
            2,
        ),
        "NORMSDIST": (lambda z: stats.norm.cdf(_num(z)), 1, 1),
        "NORM.S.INV": (lambda p: stats.norm.ppf(_probability(p, upper_closed=False)), 1, 1),
        "NORMSINV": (lambda p: stats.norm.ppf(_probability(p, upper_closed=False)), 1, 1),
        "F.DIST": (_f_dist, 4, 4),
        "F.DIST.RT": (lambda x, a, b: stats.f.sf(*_f_args(x, a, b)), 3, 3),
        "FDIST": (lambda x, a, b: stats.f.sf(*_f_args(x, a, b)), 3, 3),
        "F.INV.RT": (_f_inv_rt, 3, 3),
        "FINV": (_f_inv_rt, 3, 3),
    }
)


def _aggregate(reduce: Callable[[np.ndarray], float]) -> RangedFn:
    return lambda ev, args, ctx: reduce(_collect(args))


def _average(numbers: np.ndarray) -> float:
    if numbers.size == 0:
        raise Fault(_DIV0)
    return float(numbers.mean())


def _devsq_checked(numbers: np.ndarray) -> float:
    if numbers.size == 0:
        raise Fault(_NUM)  # Excel; LibreOffice writes #DIV/0!
    return _devsq(numbers)


def _steyx(ev: Evaluator, args: list[Any], ctx: _Ctx) -> float:
    moments = _Moments.of(args[0], args[1])
    if moments.n < 3:
        raise Fault(_DIV0)  # Excel; LibreOffice writes #VALUE!
    return math.sqrt(moments.ssresid / (moments.n - 2))


def _rsq(ev: Evaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    if m.sxx == 0 or m.syy == 0:
        raise Fault(_DIV0)
    return m.sxy * m.sxy / (m.sxx * m.syy)


def _correl(ev: Evaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    if m.sxx == 0 or m.syy == 0:
        raise Fault(_DIV0)
    return m.sxy / math.sqrt(m.sxx * m.syy)


def _intercept(ev: Evaluator, args: list[Any], ctx: _Ctx) -> float:
    m = _Moments.of(args[0], args[1])
    return m.y_mean - m.slope * m.x_mean


def _forecast(ev: Evaluator, args: list[Any], ctx: _Ctx) -> Any:
    target = ev._operand(args[0], ctx)
    m = _Moments.of(args[1], args[2])
    slope = m.slope
    return _lift(lambda x: m.y_mean + slope * (_num(x) - m.x_mean), [target])


def _linest(ev: Evaluator, args: list[Any], ctx: _Ctx) -> np.ndarray:
    known_x = args[1] if len(args) > 1 else MISSING
    const, with_stats = _flag(args, 2, True), _flag(args, 3, False)
    y, x = _design(args[0], known_x)
    return _linest_table(_least_squares(y, x, const), with_stats)


def _trend(ev: Evaluator, args: list[Any], ctx: _Ctx) -> Any:
    known_x = args[1] if len(args) > 1 else MISSING
    y, x = _design(args[0], known_x)
    fit = _least_squares(y, x, _flag(args, 3, True))
    k = fit.coef.size
    if len(args) < 3 or args[2] is MISSING:
        if known_x is MISSING:
            new = x.reshape(_as_2d(args[0]).shape) if k == 1 else x
        else:
            new = _numeric_block(known_x)
    else:
        new = _numeric_block(args[2])
    if k == 1:
        return (fit.intercept + fit.coef[0] * new).astype(object)
    if new.shape[1] == k:
        return (fit.intercept + new @ fit.coef).reshape(-1, 1).astype(object)
    if new.shape[0] == k:
        return (fit.intercept + fit.coef @ new).reshape(1, -1).astype(object)
    raise Fault(_REF)


def _extent(ev: Evaluator, args: list[Any], ctx: _Ctx, axis: int) -> float:
    arg = args[0]
    if isinstance(arg, RangeValue):
        whole = arg.ref.whole_column if axis == 0 else arg.ref.whole_row
        if whole:
            return float(SHEET_ROWS if axis == 0 else SHEET_COLS)
        return float(arg.ref.rows if axis == 0 else arg.ref.cols)
    return float(_as_2d(arg).shape[axis])


def _index(ev: Evaluator, args: list[Any], ctx: _Ctx) -> Any:
    if len(args) == 4 and args[3] is not MISSING and _int(ev._single(args[3], ctx)) != 1:
        raise Unsupported("INDEX over several areas is not evaluated")
    source = args[0]
    block = _as_2d(source)
    n_rows, n_cols = block.shape
    row = 0 if len(args) < 2 or args[1] is MISSING else _int(ev._single(args[1], ctx))
    col = 0 if len(args) < 3 or args[2] is MISSING else _int(ev._single(args[2], ctx))
    if len(args) == 2 and n_rows == 1:
        row, col = 0, row  # a single row: the one index given counts columns
    if row < 0 or col < 0:
        raise Fault(_VALUE)
    if row > n_rows or col > n_cols:
        raise Fault(_REF)
    r_lo, r_hi = (0, n_rows) if row == 0 else (row - 1, row)
    c_lo, c_hi = (0, n_cols) if col == 0 else (col - 1, col)
    if isinstance(source, RangeValue):
        ref = source.ref
        part = Ref(ref.sheet, ref.r1 + r_lo, ref.c1 + c_lo, ref.r1 + r_hi - 1, ref.c1 + c_hi - 1)
        return ev._range_arg(part)
    chosen = block[r_lo:r_hi, c_lo:c_hi]
    return chosen[0, 0] if chosen.size == 1 else chosen


def _offset(ev: Evaluator, args: list[Any], ctx: _Ctx) -> Any:
    source = args[0]
    if not isinstance(source, RangeValue):
        raise Fault(_VALUE)
    ref = source.ref
    down, across = _int(ev._single(args[1], ctx)), _int(ev._single(args[2], ctx))
    height = ref.rows if len(args) < 4 or args[3] is MISSING else _int(ev._single(args[3], ctx))
    width = ref.cols if len(args) < 5 or args[4] is MISSING else _int(ev._single(args[4], ctx))
    r1, c1 = ref.r1 + down, ref.c1 + across
    if height < 1 or width < 1 or r1 < 1 or c1 < 1:
        raise Fault(_REF)
    if r1 + height - 1 > SHEET_ROWS or c1 + width - 1 > SHEET_COLS:
        raise Fault(_REF)
    return ev._range_arg(Ref(ref.sheet, r1, c1, r1 + height - 1, c1 + width - 1))


def _pairwise(compute: Callable[[_Moments], float]) -> RangedFn:
    return lambda ev, args, ctx: compute(_Moments.of(args[0], args[1]))


_RANGED.update(
    {
        "SUM": (_aggregate(lambda v: float(v.sum())), 1, 255),
        "SUMSQ": (_aggregate(lambda v: float(v @ v)), 1, 255),
        "AVERAGE": (_aggregate(_average), 1, 255),
        "MIN": (_aggregate(lambda v: float(v.min()) if v.size else 0.0), 1, 255),
        "MAX": (_aggregate(lambda v: float(v.max()) if v.size else 0.0), 1, 255),
        "DEVSQ": (_aggregate(_devsq_checked), 1, 255),
        "COUNT": (lambda ev, args, ctx: _count(args), 1, 255),
        "COUNTA": (lambda ev, args, ctx: _counta(args), 1, 255),
        "STDEV": (lambda ev, args, ctx: math.sqrt(_variance(args, 1)), 1, 255),
        "STDEV.S": (lambda ev, args, ctx: math.sqrt(_variance(args, 1)), 1, 255),
        "STDEVP": (lambda ev, args, ctx: math.sqrt(_variance(args, 0)), 1, 255),
        "STDEV.P": (lambda ev, args, ctx: math.sqrt(_variance(args, 0)), 1, 255),
        "VAR": (lambda ev, args, ctx: _variance(args, 1), 1, 255),
        "VAR.S": (lambda ev, args, ctx: _variance(args, 1), 1, 255),
        "VARP": (lambda ev, args, ctx: _variance(args, 0), 1, 255),
        "VAR.P": (lambda ev, args, ctx: _variance(args, 0), 1, 255),
        "SLOPE": (_pairwise(lambda m: m.slope), 2, 2),
        "INTERCEPT": (_intercept, 2, 2),
        "STEYX": (_steyx, 2, 2),
        "RSQ": (_rsq, 2, 2),
        "CORREL": (_correl, 2, 2),
        "PEARSON": (_correl, 2, 2),
        "FORECAST": (_forecast, 3, 3),
        "FORECAST.LINEAR": (_forecast, 3, 3),
        "LINEST": (_linest, 1, 4),
        "TREND": (_trend, 1, 4),
        "ROWS": (lambda ev, args, ctx: _extent(ev, args, ctx, 0), 1, 1),
        "COLUMNS": (lambda ev, args, ctx: _extent(ev, args, ctx, 1), 1, 1),
        "INDEX": (_index, 1, 4),
        "OFFSET": (_offset, 3, 5),
        "TRUE": (lambda ev, args, ctx: True, 0, 0),
        "FALSE": (lambda ev, args, ctx: False, 0, 0),
        "NA": (lambda ev, args, ctx: ErrorValue(_NA), 0, 0),
        "PI": (lambda ev, args, ctx: math.pi, 0, 0),
    }
)


def _if(ev: Evaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
    condition = ev._operand(ev._eval(nodes[0], ctx), ctx)
    branches = [nodes[1] if len(nodes) > 1 else Bool(False), nodes[2] if len(nodes) > 2 else None]
    if isinstance(condition, np.ndarray):
        yes, no = (
            False
            if b is None
            else 0.0
            if isinstance(b, Missing)
            else ev._operand(ev._eval(b, ctx), ctx)
            for b in branches
        )
        return _lift(lambda c, a, b: a if _truthy(c) else b, [condition, yes, no])
    try:
        chosen = branches[0] if _truthy(condition) else branches[1]
    except Fault as fault:
        return ErrorValue(fault.code)
    if chosen is None:
        return False  # IF(FALSE, x) with no third argument
    if isinstance(chosen, Missing):
        return 0.0  # IF(cond, , x): an empty branch is 0
    return ev._eval(chosen, ctx)


def _iferror(ev: Evaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
    value = ev._operand(ev._eval(nodes[0], ctx), ctx)
    if isinstance(value, np.ndarray):
        fallback = ev._operand(ev._eval(nodes[1], ctx), ctx)
        return _lift(lambda v, f: f if type(v) is ErrorValue else v, [value, fallback])
    if type(value) is ErrorValue:
        return ev._eval(nodes[1], ctx)
    return value


def _sumproduct(ev: Evaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
    element_wise = replace(ctx, array=True)  # SUMPRODUCT evaluates its arguments as arrays
    blocks = [_as_2d(ev._operand(ev._eval(n, element_wise), element_wise)) for n in nodes]
    if any(b.shape != blocks[0].shape for b in blocks):
        return ErrorValue(_VALUE)
    product = np.ones(blocks[0].size)
    for block in blocks:
        view = _Numeric.of(block)
        if view.error is not None:
            return view.error
        product *= np.where(view.is_number, view.values, 0.0)  # non-numbers count as zero
    return float(product.sum())


_LAZY.update({"IF": (_if, 2, 3), "IFERROR": (_iferror, 2, 2), "SUMPRODUCT": (_sumproduct, 1, 255)})

SUPPORTED_FUNCTIONS = frozenset(_SCALAR) | frozenset(_RANGED) | frozenset(_LAZY)


# --- the evaluator -------------------------------------------------------------------------------

_Key = tuple[str, int, int]  # (sheet, row, col)
_Bounds = tuple[int, int, int, int]  # (r1, c1, r2, c2)


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


def _block_bounds(cell: Cell) -> _Bounds | None:
    if not cell.array_ref:
        return None
    first, _, last = cell.array_ref.partition(":")
    r1, c1 = parse_cell(first)
    r2, c2 = parse_cell(last or first)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)


class Evaluator:
    """Evaluates the formulas of one workbook; every result is memoised."""

    def __init__(self, workbook: Workbook) -> None:
        self.workbook = workbook
        self._values: dict[_Key, Any] = {}
        self._open: set[_Key] = set()  # cells being evaluated: meeting one again is a cycle
        self._ranges: dict[Ref, RangeValue] = {}
        self._computing = False  # inside the evaluation loop of _compute
        self._open_cells_met = 0  # how often a cell still open was read (a cycle)
        # Where the formula cells are (sheet -> column -> sorted rows) and the array blocks.
        self._formula_rows: dict[str, dict[int, list[int]]] = {}
        self._blocks: dict[str, dict[tuple[int, int], _Bounds]] = {}
        self._members: dict[_Key, _Bounds] = {}
        for sheet in workbook.sheets.values():
            by_col: dict[int, list[int]] = {}
            for (row, col), cell in sheet.cells.items():
                if cell.formula:
                    by_col.setdefault(col, []).append(row)
                    bounds = _block_bounds(cell)
                    if bounds is not None and (bounds[0], bounds[1]) == (row, col):
                        self._blocks.setdefault(sheet.name, {})[(row, col)] = bounds
            self._formula_rows[sheet.name] = {c: sorted(rows) for c, rows in by_col.items()}
        for (sheet_name, _row, _col), bounds in workbook.array_anchors.items():
            self._blocks.setdefault(sheet_name, {})[(bounds[0], bounds[1])] = bounds
        for sheet_name, blocks in self._blocks.items():
            for r1, c1, r2, c2 in blocks.values():
                for row in range(r1, r2 + 1):
                    for col in range(c1, c2 + 1):
                        self._members[(sheet_name, row, col)] = (r1, c1, r2, c2)

    # --- public ---------------------------------------------------------------------------------

    def cell_value(self, sheet: str, row: int, col: int) -> Value:
        """A cell's value as formulas see it: constants as typed, formulas evaluated (a cell
        inside an array block gets its element of the block's array), None when empty.
        Raises Unsupported (Unverifiable for other workbooks) when a formula cannot be
        evaluated; the message names the cell."""
        found = self.workbook.sheet(sheet)
        if found is None:
            return ErrorValue(_REF)
        value: Value = self._cell(found.name, row, col)
        return value

    def evaluate(self, node_or_text: Node | str, sheet: str) -> Value:
        """A formula (text or tree) evaluated as an array formula on ``sheet``: a scalar, or a
        2-D object array for a block (cells keep None for empty)."""
        found = self.workbook.sheet(sheet)
        name = found.name if found is not None else sheet
        node = (
            parse(node_or_text, name, self.workbook)
            if isinstance(node_or_text, str)
            else node_or_text
        )
        result = self._eval(node, _Ctx(name, array=True))
        if isinstance(result, RangeValue):
            result = result.values
        if isinstance(result, np.ndarray):
            if result.size != 1:
                return result
            result = result[0, 0]
        return 0.0 if result is None or result is MISSING else _result(result)

    def evaluate_cell(self, cell: Cell) -> Value:
        """A cell's as-written value; for an array formula's anchor, the whole block (2-D).
        Raises the cell's own FormulaError or Unsupported when it cannot be evaluated."""
        found = self.workbook.sheet(cell.sheet)
        key = (found.name if found is not None else cell.sheet, cell.row, cell.col)
        if not cell.formula:
            constant: Value = self._cell(*key) if key in self._members else _constant(cell.value)
            return constant
        self._compute(key)
        value: Value = self._values[key]
        if isinstance(value, _Failed):
            raise value.error
        return value

    def range_values(self, ref: Ref) -> np.ndarray:
        """The block's cell values as a 2-D object array (None for empty), formulas evaluated."""
        if ref.external is not None:
            raise Unverifiable(f"{ref.address} is in another workbook, which is not at hand")
        sheet = self.workbook.sheet(ref.sheet)
        if sheet is None:
            return np.full((ref.rows, ref.cols), ErrorValue(_REF), dtype=object)
        r2 = min(ref.r2, max(sheet.max_row, ref.r1)) if ref.whole_column else ref.r2
        c2 = min(ref.c2, max(sheet.max_col, ref.c1)) if ref.whole_row else ref.c2
        rows, cols = r2 - ref.r1 + 1, c2 - ref.c1 + 1
        out = np.empty((rows, cols), dtype=object)
        cells = sheet.cells
        row_span = range(ref.r1, r2 + 1)
        for j, col in enumerate(range(ref.c1, c2 + 1)):
            found = [cells.get((row, col)) for row in row_span]
            if any(c is not None for c in found):
                out[:, j] = [None if c is None else _constant(c.value) for c in found]
        # Formula cells and array-block members hold stored values: replace them.
        for col, formula_rows in self._formula_rows.get(sheet.name, {}).items():
            if ref.c1 <= col <= c2:
                lo = bisect.bisect_left(formula_rows, ref.r1)
                hi = bisect.bisect_right(formula_rows, r2)
                for row in formula_rows[lo:hi]:
                    out[row - ref.r1, col - ref.c1] = self._cell(sheet.name, row, col)
        for b_r1, b_c1, b_r2, b_c2 in self._blocks.get(sheet.name, {}).values():
            for row in range(max(b_r1, ref.r1), min(b_r2, r2) + 1):
                for col in range(max(b_c1, ref.c1), min(b_c2, c2) + 1):
                    out[row - ref.r1, col - ref.c1] = self._cell(sheet.name, row, col)
        return out

    # --- cells and dependencies -----------------------------------------------------------------

    def _cell(self, sheet: str, row: int, col: int) -> Any:
        block = self._members.get((sheet, row, col))
        if block is not None:
            table = self._formula_result((sheet, block[0], block[1]))
            if isinstance(table, np.ndarray):
                return table[row - block[0], col - block[1]]
            return table
        cell = self.workbook.sheets[sheet].get(row, col)
        if cell is None:
            return None
        if not cell.formula:
            return _constant(cell.value)
        value = self._formula_result((sheet, row, col))
        return value

    def _formula_result(self, key: _Key) -> Any:
        if key not in self._values:
            if key in self._open:
                self._open_cells_met += 1
                return CYCLE
            if self._computing:
                raise _Defer(key)  # reached through a computed reference: evaluate it first
            self._compute(key)
        value = self._values[key]
        if isinstance(value, _Failed):
            sheet, row, col = key
            where = f"{sheet}!{column_letter(col)}{row}"
            kind = Unverifiable if isinstance(value.error, Unverifiable) else Unsupported
            raise kind(f"{where} cannot be evaluated: {value.error}") from value.error
        return value

    def _compute(self, key: _Key) -> None:
        """Evaluate a formula cell after the formula cells it references, without recursion.

        The references a formula states are known before it runs; a cell it reaches only
        through OFFSET or INDEX raises _Defer, is evaluated, and the formula runs again."""
        if key in self._values:
            return
        self._computing = True
        try:
            stack, expanded = [key], set()
            while stack:
                top = stack[-1]
                if top in self._values:
                    stack.pop()
                elif top in expanded:
                    try:
                        self._finish(top)
                    except _Defer as wait:
                        stack.append(wait.key)
                        continue
                    stack.pop()
                else:
                    expanded.add(top)
                    self._open.add(top)
                    for dep in self._dependencies(top):
                        if dep not in self._values and dep not in self._open:
                            stack.append(dep)
        finally:
            self._computing = False

    def _dependencies(self, key: _Key) -> list[_Key]:
        sheet_name, row, col = key
        cell = self.workbook.sheets[sheet_name].get(row, col)
        if cell is None or not cell.formula:
            return []
        try:
            node = parse(cell.formula, sheet_name, self.workbook)
        except FormulaError:
            return []  # reported when the cell itself is evaluated
        deps: list[_Key] = []
        for ref in references(node):
            sheet = self.workbook.sheet(ref.sheet) if ref.external is None else None
            if sheet is None:
                continue
            for dep_col, rows in self._formula_rows.get(sheet.name, {}).items():
                if ref.c1 <= dep_col <= ref.c2:
                    lo, hi = bisect.bisect_left(rows, ref.r1), bisect.bisect_right(rows, ref.r2)
                    deps.extend((sheet.name, r, dep_col) for r in rows[lo:hi])
            for b_r1, b_c1, b_r2, b_c2 in self._blocks.get(sheet.name, {}).values():
                if b_r1 <= ref.r2 and ref.r1 <= b_r2 and b_c1 <= ref.c2 and ref.c1 <= b_c2:
                    deps.append((sheet.name, b_r1, b_c1))
        return deps

    def _finish(self, key: _Key) -> None:
        sheet, row, col = key
        cell = self.workbook.sheets[sheet].get(row, col)
        value: Any
        try:
            if cell is None or not cell.formula:
                value = None if cell is None else _constant(cell.value)
            else:
                node = parse(cell.formula, sheet, self.workbook)
                bounds = self._blocks.get(sheet, {}).get((row, col))
                if bounds is not None:
                    result = self._eval(node, _Ctx(sheet, row, col, array=True))
                    value = self._fit_block(result, bounds)
                else:
                    ctx = _Ctx(sheet, row, col)
                    value = self._final(self._eval(node, ctx), ctx)
        except (Unsupported, FormulaError) as exc:
            value = _Failed(exc)
        except RecursionError:
            where = f"{sheet}!{column_letter(col)}{row}"
            value = _Failed(Unsupported(f"the formula in {where} nests too deeply to evaluate"))
        self._open.discard(key)  # not on _Defer: the cell stays open until it has a value
        self._values[key] = value

    def _fit_block(self, result: Any, bounds: _Bounds) -> np.ndarray:
        r1, c1, r2, c2 = bounds
        fitted = _expand(_as_2d(result), r2 - r1 + 1, c2 - c1 + 1).copy()
        for index, item in np.ndenumerate(fitted):
            fitted[index] = 0.0 if item is None or item is MISSING else _result(item)
        return fitted

    def _final(self, result: Any, ctx: _Ctx) -> Any:
        """A normal cell shows one value: a reference's implicit intersection with the cell, an
        array's top-left element; an empty cell referenced shows 0."""
        if isinstance(result, RangeValue):
            result = self._intersect(result, ctx)
        elif isinstance(result, np.ndarray):
            result = result[0, 0]
        return 0.0 if result is None or result is MISSING else _result(result)

    # --- expressions ----------------------------------------------------------------------------

    def _range_arg(self, ref: Ref) -> RangeValue | ErrorValue:
        cached = self._ranges.get(ref)
        if cached is not None:
            return cached
        if ref.external is not None:
            raise Unverifiable(f"{ref.address} is in another workbook, which is not at hand")
        if self.workbook.sheet(ref.sheet) is None:
            return ErrorValue(_REF)
        open_cells_before = self._open_cells_met
        value = RangeValue(ref, self.range_values(ref))
        if self._open_cells_met == open_cells_before:  # a block read mid-cycle is not reused
            self._ranges[ref] = value
        return value

    def _intersect(self, value: RangeValue, ctx: _Ctx) -> Any:
        block, ref = value.values, value.ref
        if block.size == 1:
            return block[0, 0]
        if ctx.row is not None and block.shape[1] == 1 and ref.r1 <= ctx.row <= ref.r2:
            return block[ctx.row - ref.r1, 0]
        if ctx.col is not None and block.shape[0] == 1 and ref.c1 <= ctx.col <= ref.c2:
            return block[0, ctx.col - ref.c1]
        return ErrorValue(_VALUE)

    def _operand(self, value: Any, ctx: _Ctx) -> Any:
        """A value where an operator or a scalar function expects one (arrays stay arrays in an
        array formula)."""
        if isinstance(value, RangeValue):
            if ctx.array and value.values.size != 1:
                return value.values
            return self._intersect(value, ctx)
        if isinstance(value, np.ndarray):
            return value if ctx.array and value.size != 1 else value[0, 0]
        return value

    def _single(self, value: Any, ctx: _Ctx) -> Any:
        return self._operand(value, replace(ctx, array=False))

    def _eval(self, node: Node, ctx: _Ctx) -> Any:
        if isinstance(node, Number | Text | Bool):
            return node.value
        if isinstance(node, RefNode):
            return self._range_arg(node.ref)
        if isinstance(node, Call):
            return self._call(node, ctx)
        if isinstance(node, Binary):
            return self._binary_chain(node, ctx)
        if isinstance(node, Unary):
            operand = self._operand(self._eval(node.operand, ctx), ctx)
            return operand if node.op == "+" else _lift(lambda v: -_num(v), [operand])
        if isinstance(node, Percent):
            operand = self._operand(self._eval(node.operand, ctx), ctx)
            return _lift(lambda v: _num(v) / 100, [operand])
        if isinstance(node, ErrorLit):
            return ErrorValue(node.code)
        if isinstance(node, Missing):
            return MISSING
        if isinstance(node, ArrayNode):
            rows = [[self._single(self._eval(item, ctx), ctx) for item in row] for row in node.rows]
            block = np.empty((len(rows), len(rows[0])), dtype=object)
            for i, row_values in enumerate(rows):
                for j, item in enumerate(row_values):
                    block[i, j] = item
            return block
        if isinstance(node, NameNode):
            if node.external is not None:
                raise Unverifiable(f"the name {node.name!r} is defined in another workbook")
            if "[" in node.name:
                raise Unsupported(f"the structured table reference {node.name!r} is not resolved")
            return ErrorValue("#NAME?")
        raise Unsupported(f"the construct {type(node).__name__} is not evaluated")

    def _binary_chain(self, node: Binary, ctx: _Ctx) -> Any:
        if node.op in (":", " "):
            return self._reference_op(node, ctx)
        if node.op == ",":
            raise Unsupported("a union of references (A1:A5,C1:C5) is not evaluated")
        # Left-associative chains (=A1+A2+...+A500) walk their left spine in a loop.
        chain: list[Binary] = []
        left: Node = node
        while isinstance(left, Binary) and left.op not in (":", " ", ","):
            chain.append(left)
            left = left.left
        value = self._operand(self._eval(left, ctx), ctx)
        for step in reversed(chain):
            right = self._operand(self._eval(step.right, ctx), ctx)
            value = _binary(step.op, value, right)
        return value

    def _reference_op(self, node: Binary, ctx: _Ctx) -> Any:
        left, right = self._eval(node.left, ctx), self._eval(node.right, ctx)
        for side in (left, right):
            if type(side) is ErrorValue:
                return side
        if not (isinstance(left, RangeValue) and isinstance(right, RangeValue)):
            return ErrorValue(_VALUE)
        a, b = left.ref, right.ref
        if a.sheet != b.sheet:
            return ErrorValue(_VALUE)
        if node.op == ":":
            bounds = min(a.r1, b.r1), min(a.c1, b.c1), max(a.r2, b.r2), max(a.c2, b.c2)
        else:
            bounds = max(a.r1, b.r1), max(a.c1, b.c1), min(a.r2, b.r2), min(a.c2, b.c2)
            if bounds[0] > bounds[2] or bounds[1] > bounds[3]:
                return ErrorValue("#NULL!")
        return self._range_arg(Ref(a.sheet, *bounds))

    def _call(self, node: Call, ctx: _Ctx) -> Any:
        name, count = node.name, len(node.args)
        for table in (_LAZY, _RANGED, _SCALAR):
            if name in table:
                low, high = table[name][1], table[name][2]
                break
        else:
            raise Unsupported(f"the function {name} is not evaluated")
        if not low <= count <= high:
            raise Unsupported(f"{name} with {count} arguments is not evaluated")
        if name in _LAZY:
            return _LAZY[name][0](self, node.args, ctx)
        args = [self._eval(arg, ctx) for arg in node.args]
        if name in _SCALAR:
            return _lift(_SCALAR[name][0], [self._operand(a, ctx) for a in args])
        try:
            result = _RANGED[name][0](self, args, ctx)
        except Fault as fault:
            return ErrorValue(fault.code)
        return result if isinstance(result, RangeValue | np.ndarray) else _result(result)
