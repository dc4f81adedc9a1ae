"""No lost workbook: a failure inside one regression's analysis costs that regression only
(a failing check costs that check only: auditor.checks.guard).

The regression becomes *unverifiable*, with its reported cells listed (as stored) and the reason
in words; every other regression of the workbook is still audited. A function the evaluator does
not know (``SORT``, a newer dynamic-array function) is a limit of the tool, said as such; any
other exception is a bug of the tool, said as such and with a request to report it, but it no
longer turns the whole file into "unreadable".
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TypeVar

from auditor.checks.guard import reason_of
from auditor.locate.spec import RegressionSpec
from auditor.model import Finding, RegressionResult, ReportedValue

T = TypeVar("T")


def unverifiable_regression(spec: RegressionSpec, exc: BaseException) -> RegressionResult:
    """The result for a regression whose analysis failed: its cells as stored, each unverifiable,
    and one information finding that says why."""
    reason = reason_of(exc)
    reported = {
        key: ReportedValue(
            key=key,
            cell=stat.cell.address,
            value=stat.cell.value if isinstance(stat.cell.value, (int, float, str)) else None,
            formula=stat.cell.formula,
            verdict="unverifiable",
            note=reason,
        )
        for key, stat in spec.stats.items()
    }
    cells = [value.cell for value in reported.values()] or [spec.y.address]
    finding = Finding(
        check="stat-unverifiable",
        severity="info",
        cells=cells,
        message=f"The regression over {spec.x.address} and {spec.y.address} could not be "
        f"verified: {reason}. Its reported values are shown as stored.",
        evidence={"error": type(exc).__name__},
        fix="Check these values by hand; the rest of the workbook was audited.",
    )
    return RegressionResult(
        id=spec.id,
        sheet=spec.sheet,
        x_range=spec.x.address,
        y_range=spec.y.address,
        found_by=spec.found_by,
        n=0,
        intercept=spec.intercept,
        x_columns=spec.x_columns,
        reported=reported,
        findings=[finding],
        label=spec.label,
    )


def guarded(run: Callable[[], T], fallback: Callable[[BaseException], T]) -> T:
    """``run()``, or ``fallback(exc)`` when it raises."""
    try:
        return run()
    except Exception as exc:  # noqa: BLE001 - one regression's failure never costs the rest
        return fallback(exc)
