"""Wording and number formatting shared by the human-facing reporters (text and xlsx).

Keeping these in one place means summary.txt and audit.xlsx say the same thing in the same words.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from typing import Any, get_args

from auditor.model import (
    SEVERITY_RANK,
    STAT_KEYS,
    AuditResult,
    Finding,
    RegressionResult,
    Severity,
    WorkbookStatus,
)

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


# What each statistic key means, in the words the detail sheets use.
STAT_LABELS: dict[str, str] = {
    "slope": "slope",
    "intercept": "intercept",
    "se_slope": "standard error of the slope",
    "se_intercept": "standard error of the intercept",
    "t_slope": "t of the slope",
    "t_intercept": "t of the intercept",
    "p_slope": "p-value of the slope",
    "p_intercept": "p-value of the intercept",
    "df": "residual degrees of freedom",
    "n": "points used (n)",
    "residual_sd": "residual standard deviation",
    "r_squared": "R squared",
    "r": "correlation r",
    "f": "F statistic",
    "ss_regression": "regression sum of squares",
    "ss_residual": "residual sum of squares",
    "ci_slope_low": "confidence limit of the slope, lower",
    "ci_slope_high": "confidence limit of the slope, upper",
    # numbers of a pasted analysis table
    "multiple_r": "multiple R",
    "adj_r_squared": "adjusted R squared",
    "df_regression": "regression degrees of freedom",
    "df_total": "total degrees of freedom",
    "ss_total": "total sum of squares",
    "ms_regression": "regression mean square",
    "ms_residual": "residual mean square",
    "f_p": "p-value of F",
    "ci_intercept_low": "confidence limit of the intercept, lower",
    "ci_intercept_high": "confidence limit of the intercept, upper",
}

VERDICT_MEANING: dict[str, str] = {
    "confirmed": "reported, as written and intended values agree at the precision the value "
    "carries",
    "mismatch": "the reported value disagrees with what its formula computes or with what the "
    "data support",
    "unverifiable": "regaudit could not recompute this value (no formula it can evaluate, or an "
    "undefined fit)",
}

THREE_VALUES: tuple[tuple[str, str], ...] = (
    ("reported", "what the author saw: the cell's stored value, its typed constant or its text"),
    ("as written", "what the cell's formula computes over the ranges it actually references"),
    (
        "intended",
        "regaudit's own fit over the whole data table (rows below the range included, "
        "numbers stored as text parsed, total rows left out)",
    ),
)


def split_stat_key(key: str) -> tuple[str, int | None, str]:
    """'se_slope[2]@G9' -> ('se_slope', 2, 'G9'); the parts a label is made of."""
    base, _, cell = key.partition("@")
    column: int | None = None
    if base.endswith("]") and "[" in base:
        base, _, index = base[:-1].partition("[")
        column = int(index) if index.isdigit() else None
    return base, column, cell


def stat_label(key: str) -> str:
    """A key in words: 'slope[2]' -> 'slope of x2', 'r@B8' -> 'correlation r (also in B8)'."""
    base, column, cell = split_stat_key(key)
    label = STAT_LABELS.get(base, base.replace("_", " "))
    if column is not None:
        label += f" of x{column}"
    if cell.endswith("%"):
        label += f" at {cell}"  # a second confidence level of a pasted table
    elif cell:
        label += f" (also in {cell})"
    return label


def stat_order(key: str) -> tuple[int, int, str]:
    """Sort key putting statistics in STAT_KEYS order, x columns in turn, second cells last."""
    base, column, cell = split_stat_key(key)
    rank = STAT_KEYS.index(base) if base in STAT_KEYS else len(STAT_KEYS)
    return rank, column or 0, cell


# The design metrics regaudit knows by name; any other key is shown with its own name.
DESIGN_LABELS: dict[str, str] = {
    "n": "points used (n)",
    "levels": "distinct x levels",
    "replicated_levels": "levels with replicates",
    "max_replicates": "most points at one level",
    "sxx": "Sxx (spread of x)",
    "x_min": "smallest x",
    "x_max": "largest x",
    "x_mean": "mean of x",
    "x_range": "range of x",
    "spacing_evenness": "evenness of spacing (smallest gap / largest)",
    "max_leverage": "largest leverage",
    "max_leverage_row": "row of the largest leverage",
    "leverage_bound": "leverage limit",
    "max_sxx_share": "largest one point's share of Sxx",
    "max_sxx_share_row": "row of that point",
    "top_share_slope_without": "slope without that point",
    "top_share_p_without": "p-value without that point",
    "residual_sd": "residual standard deviation",
    "df": "residual degrees of freedom",
    "slope": "slope",
    "p_slope": "p-value of the slope",
    "ci_low": "confidence limit of the slope, lower",
    "ci_high": "confidence limit of the slope, upper",
    "ci_half_width": "half-width of that interval",
    "slope_that_matters": "slope that matters",
    "slope_that_matters_source": "where that slope comes from",
    "power": "power to detect the slope that matters",
    "min_detectable_slope": "smallest detectable slope",
    "sxx_needed": "Sxx needed",
    "se_needed": "standard error of the slope that Sxx gives",
    "n_even_needed": "evenly spaced points needed (present range)",
    "width_needed": "x range needed (present n, evenly spaced)",
    "predictions": "predictions read off the line",
    "predictions_outside": "predictions outside the x range",
    "lack_of_fit_f": "lack-of-fit F",
    "lack_of_fit_p": "lack-of-fit p-value",
    "lack_of_fit_df": "lack-of-fit degrees of freedom",
    "pure_error_df": "pure-error degrees of freedom",
    "working_range_cell": "cell stating the working range",
    "drop_one_slope_min": "smallest slope with one row left out",
    "drop_one_slope_max": "largest slope with one row left out",
    "drop_one_p_min": "smallest p-value with one row left out",
    "drop_one_p_max": "largest p-value with one row left out",
    "drop_one_p_min_row": "row whose omission gives the smallest p-value",
    "drop_one_p_max_row": "row whose omission gives the largest p-value",
    "drop_one_crossing_rows": "rows whose omission alone changes the conclusion",
    "drop_one_crossing_row": "of those, the row that moves p the most",
    "drop_one_crossing_p": "p-value without that row",
    "drop_one_undefined_row": "row without which the slope cannot be computed",
    "drop_one_sign_flip_row": "row without which the slope changes sign",
}


def design_label(key: str) -> str:
    return DESIGN_LABELS.get(key, key.replace("_", " "))


@dataclass(frozen=True)
class AnnotatedCopy:
    """One annotated copy of an audited workbook (made by auditor.review.annotate, shown by
    reports)."""

    source: str  # the audited workbook, never changed
    copy: str  # NAME.audited.xlsx in the output folder
    notes: int  # cells that carry a note
    may_lose: tuple[str, ...] = ()  # content the copy may lose, in words: "2 charts"
    error: str = ""  # why no copy was made, when none could be


def copy_caveat(copy: AnnotatedCopy) -> str:
    """What the copy may lack, in one sentence (the Overview and the copy's own note say it)."""
    if not copy.may_lose:
        return "Nothing was found that the copy is known to lose; formulas recalculate on opening."
    return (
        f"The copy may lose or simplify {', '.join(copy.may_lose)}, which the library that "
        "writes it cannot carry over faithfully; compare with the original before relying on "
        "the copy for anything but the notes."
    )


def short_paths(result: AuditResult) -> dict[str, str]:
    """Each workbook's path relative to the folder all of them share (the tables' "workbook").

    Long shared prefixes push every other column off the screen; the Overview and the detail
    sheets still give the full path.
    """
    paths = [workbook.path for workbook in result.workbooks]
    try:
        shared = os.path.commonpath([os.path.dirname(path) or "." for path in paths])
    except ValueError:  # absolute and relative paths mixed, or nothing at all
        return {path: path for path in paths}
    return {path: os.path.relpath(path, shared) if shared else path for path in paths}


def sort_findings(findings: list[Finding]) -> list[Finding]:
    """Most severe first, then by check id and cells (the order reports list findings in)."""
    return sorted(findings, key=lambda f: (SEVERITY_RANK[f.severity], f.check, f.cells))
