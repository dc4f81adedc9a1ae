"""Every spreadsheet function the evaluator knows, merged from the family modules.

Three kinds. Scalar functions take scalars (element-wise over arrays) and raise Fault for an
error; ranged functions take the evaluated arguments as they are (a RangeValue for a
reference); lazy functions take the argument nodes (IF evaluates one branch only).
"""

from __future__ import annotations

from auditor.evaluation import (
    covariance,
    distributions,
    logic,
    maths,
    pairsums,
    regression,
    summaries,
)
from auditor.evaluation.values import LazyFn, RangedFn, ScalarFn

_SCALAR: dict[str, tuple[ScalarFn, int, int]] = {**maths.SCALAR, **distributions.SCALAR}
_RANGED: dict[str, tuple[RangedFn, int, int]] = {
    **summaries.RANGED,
    **regression.RANGED,
    **logic.RANGED,
    **covariance.RANGED,
}
_LAZY: dict[str, tuple[LazyFn, int, int]] = {**logic.LAZY, **summaries.LAZY, **pairsums.LAZY}

SUPPORTED_FUNCTIONS = frozenset(_SCALAR) | frozenset(_RANGED) | frozenset(_LAZY)
