"""A check that fails costs that check only (auditor.checks.base.run_checks, auditor.checks.guard):
its place in the findings holds one information finding that says why, at the regression's
first reported cell, and every other check of the scope still runs, in registry order."""

from __future__ import annotations

import types

from auditor.checks.base import Check, run_checks
from auditor.context import RegressionContext, WorkbookContext
from auditor.errors import Unsupported
from auditor.model import Finding


def _found(message: str) -> Check:
    return Check(message, "Finds one thing.", "test", lambda _c: [Finding(message, "minor", "m")])


def _failing(check_id: str, exc: Exception, scope: str = "regression") -> Check:
    def run(_context: object) -> list[Finding]:
        raise exc

    return Check(check_id, "Fails.", "test", run, scope)


def _regression(cells: list[str], y: str = "Data!B2:B9") -> RegressionContext:
    context = RegressionContext.__new__(RegressionContext)
    context.reported = {f"k{i}": types.SimpleNamespace(cell=cell) for i, cell in enumerate(cells)}  # type: ignore[misc]
    context.spec = types.SimpleNamespace(y=types.SimpleNamespace(address=y))  # type: ignore[assignment]
    return context


def test_a_failing_check_gives_one_note_and_the_others_still_run() -> None:
    registry = {
        "first": _found("first"),
        "broken": _failing("broken", ZeroDivisionError("planted")),
        "last": _found("last"),
        "elsewhere": _failing("elsewhere", ValueError("not run"), scope="workbook"),
    }
    found = run_checks(registry, "regression", _regression(["Out!E4", "Out!E5"]))
    assert [f.check for f in found] == ["first", "stat-unverifiable", "last"]
    note = found[1]
    assert note.severity == "info" and note.cells == ["Out!E4"]
    assert note.message == (
        "The check broken could not run here: internal error (ZeroDivisionError: planted); "
        "please report it."
    )
    assert note.evidence == {"error": "ZeroDivisionError", "check_id": "broken"}


def test_a_limit_of_the_tool_is_said_as_such_where_nothing_is_reported() -> None:
    registry = {"sorts": _failing("sorts", Unsupported("SORT is not evaluated"))}
    found = run_checks(registry, "regression", _regression([], y="Data!C2:C9"))
    assert [(f.cells, f.message) for f in found] == [
        (["Data!C2:C9"], "The check sorts could not run here: SORT is not evaluated.")
    ]


def test_a_failing_workbook_check_is_noted_without_a_cell() -> None:
    registry = {"wide": _failing("wide", KeyError("k"), scope="workbook"), "next": _found("next")}
    registry["next"] = Check("next", "Finds.", "test", registry["next"].function, "workbook")
    found = run_checks(registry, "workbook", WorkbookContext(stored_values=True, formula_count=0))
    assert [(f.check, f.cells) for f in found] == [("stat-unverifiable", []), ("next", [])]
