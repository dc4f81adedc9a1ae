"""Logic and lookup: IF, IFERROR, INDEX, OFFSET, ROWS, COLUMNS and the constant functions."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from auditor.errors import Unsupported
from auditor.evaluation.coerce import _as_2d, _int, _truthy
from auditor.evaluation.operators import _lift
from auditor.evaluation.values import (
    _NA,
    _REF,
    _VALUE,
    MISSING,
    Fault,
    LazyFn,
    NodeEvaluator,
    RangedFn,
    RangeValue,
    _Ctx,
)
from auditor.formula.syntax import SHEET_COLS, SHEET_ROWS, Bool, Missing, Node, Ref
from auditor.read.workbook import ErrorValue


def _extent(ev: NodeEvaluator, args: list[Any], ctx: _Ctx, axis: int) -> float:
    arg = args[0]
    if isinstance(arg, RangeValue):
        whole = arg.ref.whole_column if axis == 0 else arg.ref.whole_row
        if whole:
            return float(SHEET_ROWS if axis == 0 else SHEET_COLS)
        return float(arg.ref.rows if axis == 0 else arg.ref.cols)
    return float(_as_2d(arg).shape[axis])


def _index(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> Any:
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


def _offset(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> Any:
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


def _if(ev: NodeEvaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
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


def _iferror(ev: NodeEvaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
    value = ev._operand(ev._eval(nodes[0], ctx), ctx)
    if isinstance(value, np.ndarray):
        fallback = ev._operand(ev._eval(nodes[1], ctx), ctx)
        return _lift(lambda v, f: f if type(v) is ErrorValue else v, [value, fallback])
    if type(value) is ErrorValue:
        return ev._eval(nodes[1], ctx)
    return value


RANGED: dict[str, tuple[RangedFn, int, int]] = {
    "ROWS": (lambda ev, args, ctx: _extent(ev, args, ctx, 0), 1, 1),
    "COLUMNS": (lambda ev, args, ctx: _extent(ev, args, ctx, 1), 1, 1),
    "INDEX": (_index, 1, 4),
    "OFFSET": (_offset, 3, 5),
    "TRUE": (lambda ev, args, ctx: True, 0, 0),
    "FALSE": (lambda ev, args, ctx: False, 0, 0),
    "NA": (lambda ev, args, ctx: ErrorValue(_NA), 0, 0),
    "PI": (lambda ev, args, ctx: math.pi, 0, 0),
}

LAZY: dict[str, tuple[LazyFn, int, int]] = {"IF": (_if, 2, 3), "IFERROR": (_iferror, 2, 2)}
