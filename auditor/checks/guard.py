"""A failing check costs that check only: its place in the findings says so, in words.

A function the evaluator does not know (``SORT``, a newer dynamic-array function) is a limit
of the tool, said as such; any other exception is a bug of the tool, said as such with a request
to report it. Either way the other checks, and the other regressions, still run.
"""

from __future__ import annotations

from collections.abc import Callable

from auditor.errors import Unsupported
from auditor.model import Finding


def reason_of(exc: BaseException) -> str:
    """The failure in a reviewer's words: a known limit, or a bug to report."""
    if isinstance(exc, Unsupported):
        return str(exc)
    return f"internal error ({type(exc).__name__}: {exc}); please report it"


def guarded_check(
    check_id: str, run: Callable[[], list[Finding]], cells: list[str]
) -> list[Finding]:
    """One check's findings; when the check itself fails, one information finding instead."""
    try:
        return run()
    except Exception as exc:  # noqa: BLE001 - one check's failure never costs the others
        return [
            Finding(
                check="stat-unverifiable",
                severity="info",
                cells=cells[:1],
                message=f"The check {check_id} could not run here: {reason_of(exc)}.",
                evidence={"error": type(exc).__name__, "check_id": check_id},
                fix="Review what this check covers by hand.",
            )
        ]
