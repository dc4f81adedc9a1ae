"""The values formulas pass around, the errors that stop them, and the function signatures."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, Protocol

import numpy as np

from auditor.formula.syntax import Node, Ref
from auditor.read.workbook import ErrorValue

Value = float | str | bool | ErrorValue | None | np.ndarray

CYCLE = ErrorValue("#CYCLE!")  # no spreadsheet error code exists for it; Excel shows 0 and warns
_NA, _VALUE, _NUM, _DIV0, _REF = "#N/A", "#VALUE!", "#NUM!", "#DIV/0!", "#REF!"


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
    _paired: dict[tuple[int, Any], tuple[RangeValue, Any]] = field(
        default_factory=dict, compare=False
    )

    def numeric(self) -> _Numeric:
        if self._numeric is None:
            self._numeric = _Numeric.of(self.values)
        return self._numeric

    def paired(self, other: RangeValue, compute: Callable[[RangeValue, RangeValue], Any]) -> Any:
        """``compute(self, other)``, kept for this very ``other`` (SLOPE, INTERCEPT, RSQ and
        STEYX of one pair of ranges read the same sums). The key is the other block's identity
        (and the computation's), the block held here so that its id cannot pass to another."""
        key = (id(other), compute)
        found = self._paired.get(key)
        if found is None or found[0] is not other:
            found = self._paired[key] = (other, compute(self, other))
        return found[1]


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
        kinds = set(map(type, flat))
        if kinds == {float}:  # the common block: numbers only, judged once per type present
            return _Numeric(flat.astype(float), np.ones(flat.size, dtype=bool), -1, None)
        is_number = np.fromiter((type(v) is float for v in flat), dtype=bool, count=flat.size)
        values = np.full(flat.size, np.nan)
        values[is_number] = flat[is_number].astype(float)
        error_at = -1
        if ErrorValue in kinds:
            is_error = np.fromiter((type(v) is ErrorValue for v in flat), bool, count=flat.size)
            error_at = int(np.argmax(is_error))
        error = flat[error_at] if error_at >= 0 else None
        return _Numeric(values, is_number, error_at, error)


@dataclass(frozen=True)
class _Ctx:
    sheet: str
    row: int | None = None  # the formula's own cell, for implicit intersection
    col: int | None = None
    array: bool = False  # inside an array formula (or SUMPRODUCT): operate element-wise


# The signatures of the three kinds of function; auditor.evaluation.functions says what each
# kind receives. Declared here so that every family module can name them without a cycle.

ScalarFn = Callable[..., Any]
RangedFn = Callable[["NodeEvaluator", list[Any], _Ctx], Any]
LazyFn = Callable[["NodeEvaluator", tuple[Node, ...], _Ctx], Any]


class NodeEvaluator(Protocol):
    """What a ranged or lazy function may ask of the expression evaluator that calls it
    (a protocol here, so the function families never import the evaluator itself)."""

    def _range_arg(self, ref: Ref) -> RangeValue | ErrorValue: ...

    def _operand(self, value: Any, ctx: _Ctx) -> Any: ...

    def _single(self, value: Any, ctx: _Ctx) -> Any: ...

    def _eval(self, node: Node, ctx: _Ctx) -> Any: ...
