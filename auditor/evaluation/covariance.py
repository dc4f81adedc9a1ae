"""Covariance: COVAR and COVARIANCE.P (divide by n), COVARIANCE.S (divide by n − 1).

Like SLOPE, they pair the two ranges cell by cell and keep a pair only where both cells hold
numbers (text such as "n/a", logicals and blanks drop the pair), while VAR and VAR.S keep every
number of their one range: a hand-built slope COVARIANCE.S(y, x)/VAR.S(x) over a y column with
text therefore divides sums over different rows (see :mod:`auditor.mistakes_handbuilt`).
"""

from __future__ import annotations

from typing import Any

from auditor.evaluation.regression import _pairs
from auditor.evaluation.values import _DIV0, Fault, NodeEvaluator, RangedFn, _Ctx


def _covariance(ddof: int) -> RangedFn:
    def compute(ev: NodeEvaluator, args: list[Any], ctx: _Ctx) -> float:
        first, second = _pairs(args[0], args[1])
        if first.size <= ddof or first.size == 0:
            raise Fault(_DIV0)
        centred = (first - first.mean()) @ (second - second.mean())
        return float(centred) / (first.size - ddof)

    return compute


RANGED: dict[str, tuple[RangedFn, int, int]] = {
    "COVAR": (_covariance(0), 2, 2),
    "COVARIANCE.P": (_covariance(0), 2, 2),
    "COVARIANCE.S": (_covariance(1), 2, 2),
}
