"""Sums over paired arrays: SUMXMY2 (Σ(x − y)²), SUMX2MY2 (Σ(x² − y²)), SUMX2PY2 (Σ(x² + y²)).

A residual sum of squares built by hand reads ``SUMXMY2(y, b0 + b1*x)``: its arguments are
array expressions, evaluated element-wise as SUMPRODUCT's are. The two arrays must have the same
shape (#N/A otherwise, as spreadsheets give); a pair where either side is not a number (text,
a logical, a blank) is left out; the first error value in either array is the result.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from typing import Any

import numpy as np

from auditor.evaluation.coerce import _as_2d
from auditor.evaluation.values import _NA, LazyFn, NodeEvaluator, _Ctx, _Numeric
from auditor.formula.syntax import Node
from auditor.read.workbook import ErrorValue


def _paired_sum(term: Callable[[np.ndarray, np.ndarray], np.ndarray]) -> LazyFn:
    def compute(ev: NodeEvaluator, nodes: tuple[Node, ...], ctx: _Ctx) -> Any:
        element_wise = replace(ctx, array=True)
        first, second = (
            _as_2d(ev._operand(ev._eval(n, element_wise), element_wise)) for n in nodes
        )
        if first.shape != second.shape:
            return ErrorValue(_NA)
        left, right = _Numeric.of(first), _Numeric.of(second)
        for view in (left, right):
            if view.error is not None:
                return view.error
        keep = left.is_number & right.is_number
        return float(term(left.values[keep], right.values[keep]).sum())

    return compute


LAZY: dict[str, tuple[LazyFn, int, int]] = {
    "SUMXMY2": (_paired_sum(lambda x, y: (x - y) ** 2), 2, 2),
    "SUMX2MY2": (_paired_sum(lambda x, y: x * x - y * y), 2, 2),
    "SUMX2PY2": (_paired_sum(lambda x, y: x * x + y * y), 2, 2),
}
