"""A formula the evaluator cannot compute is remembered without the frames that raised it, so
that the workbook and the evaluator are freed by reference counting when the audit lets them go
(auditor.evaluation.failed)."""

from __future__ import annotations

import gc
import weakref

import pytest

from auditor.evaluation.evaluator import Evaluator, Unsupported
from auditor.evaluation.failed import failed
from auditor.read.workbook import Cell, Sheet, Workbook


def _book() -> Workbook:
    sheet = Sheet("Data")
    cells = [
        Cell("Data", 1, 1, 2.0),
        Cell("Data", 1, 2, None, "=STOCKHISTORY(A1)"),  # not evaluated: Unsupported
        Cell("Data", 1, 3, None, "=B1+1"),  # fails because B1 does
        Cell("Data", 1, 4, None, "=A1*3"),  # 6: evaluated beside them
    ]
    for cell in cells:
        sheet.cells[(cell.row, cell.col)] = cell
    sheet.max_row, sheet.max_col = 1, 4
    return Workbook("mem.xlsx", "", {"Data": sheet}, [], True)


def test_failed_cells_raise_again_with_their_message() -> None:
    evaluator = Evaluator(_book())
    for _ in range(2):  # the second time from the memo
        with pytest.raises(Unsupported, match=r"^Data!C1 .*: Data!B1 .*STOCKHISTORY"):
            evaluator.cell_value("Data", 1, 3)
    assert evaluator.cell_value("Data", 1, 4) == 6.0


def test_an_evaluator_with_failed_cells_is_freed_without_the_cyclic_collector() -> None:
    was_enabled = gc.isenabled()
    gc.disable()  # only reference counting frees below
    try:
        evaluator = Evaluator(_book())
        with pytest.raises(Unsupported):
            evaluator.cell_value("Data", 1, 3)
        assert evaluator.cell_value("Data", 1, 4) == 6.0
        gone = weakref.ref(evaluator)
        del evaluator
        assert gone() is None
    finally:
        if was_enabled:
            gc.enable()


def test_failed_keeps_the_error_and_drops_every_traceback_of_its_chain() -> None:
    def inner() -> None:
        raise ValueError("inner")

    def outer() -> None:
        try:
            inner()
        except ValueError as exc:
            try:
                raise KeyError("while handling")
            except KeyError:
                raise Unsupported("outer") from exc

    with pytest.raises(Unsupported) as caught:
        outer()
    error = caught.value
    assert error.__traceback__ is not None
    kept = failed(error)
    assert kept.error is error and str(error) == "outer"
    cause, context = error.__cause__, error.__context__
    assert isinstance(cause, ValueError) and isinstance(context, KeyError)
    assert context.__context__ is cause  # the KeyError was raised while handling the ValueError
    for link in (error, cause, context):
        assert link.__traceback__ is None
