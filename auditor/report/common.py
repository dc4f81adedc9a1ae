"""Wording and number formatting shared by the human-facing reporters (text and xlsx).

Keeping these in one place means summary.txt and audit.xlsx say the same thing in the same words.
"""

from __future__ import annotations

import math
from typing import Any, get_args

from auditor.model import AuditResult, RegressionResult, Severity, WorkbookStatus

MISSING = "—"

STATUSES: tuple[str, ...] = get_args(WorkbookStatus)

# The statistics shown side by side (reported against intended) in the tables, in reading order.
TABLE_STATS: tuple[tuple[str, str], ...] = (
    ("slope", "slope"),
    ("SE", "se_slope"),
    ("t", "t_slope"),
    ("p", "p_slope"),
)

SEVERITY_MEANING: dict[Severity, str] = {
    "critical": "the conclusion changes: significance at the policy's alpha, or the slope's sign",
    "major": "a reported value is wrong beyond its precision, or the design cannot support "
    "the claim",
    "minor": "a risk that does not change a number today, such as a pasted value that still agrees",
    "info": "context for the reviewer; nothing to correct",
}

CAUTION = (
    "Caution: regaudit checks the arithmetic of each regression and the adequacy of its design "
    "against a review policy. It does not judge whether a method or a result is fit for its "
    "purpose. Where these results feed released laboratory results or safety decisions, the "
    "laboratory's own procedures, local regulations and licensed professional practice decide."
)

NO_STORED_VALUES = (
    'This file carries no stored values, so the "reported" values were computed by regaudit '
    "from the workbook's own formulas rather than read from the file."
)


def is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def finite_or_none(value: Any) -> Any:
    """Non-finite floats become None; every other value passes through."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def format_value(key: str, value: Any) -> str:
    """A statistic as a reviewer reads it: 6 significant digits, p-values 3, counts whole."""
    value = finite_or_none(value)
    if value is None or value == "":
        return MISSING
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if key in ("df", "n") and value.is_integer():
            return str(int(value))
        digits = 3 if key.startswith("p_") else 6
        return f"{value:.{digits}g}"
    return str(value)  # text claims such as "<0.001" are shown exactly as the author wrote them


def reported_and_intended(regression: RegressionResult, key: str) -> tuple[Any, Any, str | None]:
    """The reported value, the intended value and the verdict of one statistic (None if absent)."""
    reported = regression.reported.get(key)
    intended = regression.intended.get(key)
    if intended is None and reported is not None:
        intended = reported.intended
    if reported is None:
        return None, finite_or_none(intended), None
    return finite_or_none(reported.value), finite_or_none(intended), reported.verdict


def status_counts(result: AuditResult) -> dict[str, int]:
    """Workbooks per status, every status listed even when none has it."""
    counts = {status: 0 for status in STATUSES}
    for workbook in result.workbooks:
        counts[workbook.status] = counts.get(workbook.status, 0) + 1
    return counts


def plain(value: Any) -> Any:
    """A JSON-safe copy: non-finite floats become None, tuples lists, numpy scalars Python ones.

    Checks put whatever they computed into ``evidence``, sometimes nested; one NaN deep inside must
    not stop the whole report (JSON has no NaN).
    """
    if isinstance(value, dict):
        return {str(key): plain(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(item) for item in value]
    if hasattr(value, "tolist") and not isinstance(value, (str, bytes)):
        return plain(value.tolist())  # numpy scalars and arrays → Python numbers and lists
    return finite_or_none(value)
