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

This module is the interface; the parts live in :mod:`auditor.evaluation` (its docstring draws
the layers), so that callers import from one place however the parts are arranged.
"""

from __future__ import annotations

from auditor.errors import Unsupported, Unverifiable
from auditor.evaluation.engine import Evaluator
from auditor.evaluation.functions import SUPPORTED_FUNCTIONS
from auditor.evaluation.values import (
    CYCLE,
    MISSING,
    Fault,
    RangeValue,
    Value,
)

__all__ = [
    "CYCLE",
    "MISSING",
    "SUPPORTED_FUNCTIONS",
    "Evaluator",
    "Fault",
    "RangeValue",
    "Unsupported",
    "Unverifiable",
    "Value",
]
