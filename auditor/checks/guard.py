"""A failing check costs that check only: its place in the findings says so, in words.

A function the evaluator does not know (``SORT``, a newer dynamic-array function) is a limit
of the tool, said as such; any other exception is a bug of the tool, said as such with a request
to report it. Either way the other checks, and the other regressions, still run.
"""

from __future__ import annotations

from auditor.errors import Unsupported
from auditor.model import Finding


def reason_of(exc: BaseException) -> str:
    """The failure in a reviewer's words: a known limit, or a bug to report."""
    if isinstance(exc, Unsupported):
        return str(exc)
    return f"internal error ({type(exc).__name__}: {exc}); please report it"


def failed_check(check_id: str, exc: Exception, cells: list[str]) -> list[Finding]:
    """The one information finding that stands for a check that failed with ``exc`` (the
    checks run by :func:`auditor.checks.base.run_checks` catch it and give this instead)."""
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
