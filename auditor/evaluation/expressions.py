"""A syntax tree evaluated: operators, calls, references and how a result fills its cell.

:class:`ExpressionEvaluator` knows nothing of where cell values come from; the engine (its
subclass) provides ``_range_arg``, which reads a block with its formulas evaluated.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from auditor.errors import Unsupported, Unverifiable
from auditor.evaluation.coerce import _as_2d, _num, _result
from auditor.evaluation.functions import _LAZY, _RANGED, _SCALAR
from auditor.evaluation.layout import _Bounds
from auditor.evaluation.operators import _binary, _expand, _lift
from auditor.evaluation.values import (
    _VALUE,
    MISSING,
    Fault,
    RangeValue,
    _Ctx,
)
from auditor.formula.syntax import (
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
)
from auditor.read.workbook import ErrorValue

LONG_WAY = object()  # _one_cell: no shortcut, read the cell's block


class ExpressionEvaluator:
    """Evaluates formula trees; subclasses say how a reference reads its cells."""

    def _range_arg(self, ref: Ref) -> RangeValue | ErrorValue:
        raise NotImplementedError  # the engine reads the block and caches it

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

    def _one_cell(self, ref: Ref) -> Any:
        """The value of the one cell ``ref`` names as ``_operand`` would read it from its block,
        or LONG_WAY: read the block (the engine reads the cell directly)."""
        return LONG_WAY

    def _operand_of(self, node: Node, ctx: _Ctx) -> Any:
        """``_operand(_eval(node))``; a reference to one cell of this workbook read without
        making its one-cell block (most operands of a row formula are such cells)."""
        if type(node) is RefNode:
            ref = node.ref
            if (
                ref.r1 == ref.r2
                and ref.c1 == ref.c2
                and ref.external is None
                and not (ref.whole_column or ref.whole_row)
            ):
                value = self._one_cell(ref)
                if value is not LONG_WAY:
                    return value
        return self._operand(self._eval(node, ctx), ctx)

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
            operand = self._operand_of(node.operand, ctx)
            return operand if node.op == "+" else _lift(lambda v: -_num(v), [operand])
        if isinstance(node, Percent):
            operand = self._operand_of(node.operand, ctx)
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
        value = self._operand_of(left, ctx)
        for step in reversed(chain):
            right = self._operand_of(step.right, ctx)
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
