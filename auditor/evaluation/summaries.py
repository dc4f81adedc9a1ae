"""Summaries of ranges: SUM, AVERAGE, COUNT, STDEV, VAR, DEVSQ and SUMPRODUCT."""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import Any

import numpy as np

from auditor.evaluation.coerce import _as_2d, _num, _numeric_view, _text_to_number
from auditor.evaluation.values import (
    _DIV0,
    _NUM,
    _VALUE,
    MISSING,
    Fault,
    LazyFn,
    NodeEvaluator,
    RangedFn,
    RangeValue,
    _Ctx,
    _Numeric,
)
from auditor.formula.syntax import Node
from auditor.read.workbook import ErrorValue


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


def _sumproduct(ev: NodeEvaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
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


RANGED: dict[str, tuple[RangedFn, int, int]] = {
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
}

LAZY: dict[str, tuple[LazyFn, int, int]] = {"SUMPRODUCT": (_sumproduct, 1, 255)}
