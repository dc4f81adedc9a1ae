"""One regression's verdict as a table row shows it, consistent with the row's own columns and
with the regression's findings.

The model's ``RegressionResult.verdict`` sums up every reported statistic. A row of a table shows
only a few of them (slope, SE, t, p), so a mismatch in R² alone would read "mismatch" beside
columns that all agree; and a slope confirmed to every digit would read a green "confirmed"
beside a major finding on its design. The row verdict says both:

    mismatch                      a shown statistic disagrees
    mismatch in R²                only statistics the row does not show disagree (named)
    agrees; major finding         values agree, but a finding at or above major stands
    confirmed in part (p)         values agree where checked; some could not be checked (named)
    confirmed                     every reported statistic agrees, no major finding
    unverifiable                  nothing reported could be checked
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from auditor.model import RegressionResult, WorkbookResult, stat_base

SHORT_NAMES: dict[str, str] = {
    "slope": "slope",
    "intercept": "intercept",
    "se_slope": "SE",
    "se_intercept": "SE of the intercept",
    "t_slope": "t",
    "t_intercept": "t of the intercept",
    "p_slope": "p",
    "p_intercept": "p of the intercept",
    "df": "df",
    "n": "n",
    "residual_sd": "residual SD",
    "r_squared": "R²",
    "r": "r",
    "f": "F",
    "ss_regression": "regression SS",
    "ss_residual": "residual SS",
    "ci_slope_low": "lower CI limit",
    "ci_slope_high": "upper CI limit",
}


@dataclass(frozen=True)
class RowVerdict:
    text: str  # what the cell says
    tone: str  # a verdict ("confirmed", "mismatch", "unverifiable") or a severity, for colour
    category: str  # for counting: one of CATEGORIES


CATEGORIES: tuple[str, ...] = (
    "mismatch",
    "values agree, with a major or critical finding",
    "confirmed in part (some values unverifiable)",
    "confirmed",
    "unverifiable",
)


NAMES_LISTED = 2  # more hidden statistics are counted, so the verdict stays one short line


def _names(keys: Iterable[str]) -> str:
    names = list(dict.fromkeys(SHORT_NAMES.get(stat_base(k).split("[")[0], k) for k in keys))
    listed = ", ".join(names[:NAMES_LISTED])
    more = len(names) - NAMES_LISTED
    return listed + (f" and {more} more" if more > 0 else "")


def row_verdict(regression: RegressionResult, shown: Iterable[str]) -> RowVerdict:
    """The verdict of a row that shows the statistics ``shown`` (base keys such as "slope")."""
    shown_bases = set(shown)
    by_verdict: dict[str, list[str]] = {}
    for key, value in regression.reported.items():
        by_verdict.setdefault(value.verdict, []).append(key)
    mismatched = by_verdict.get("mismatch", [])
    if mismatched:
        hidden = [k for k in mismatched if stat_base(k).split("[")[0] not in shown_bases]
        if not hidden:
            text = "mismatch"
        elif len(hidden) == len(mismatched):
            text = f"mismatch in {_names(hidden)}"
        else:
            text = f"mismatch (also {_names(hidden)})"
        return RowVerdict(text, "mismatch", CATEGORIES[0])
    worst = regression.worst_severity
    confirmed = by_verdict.get("confirmed", [])
    if worst in ("critical", "major") and confirmed:
        return RowVerdict(f"agrees; {worst} finding", worst, CATEGORIES[1])
    unverifiable = by_verdict.get("unverifiable", [])
    if confirmed and unverifiable:
        text = f"confirmed in part ({_names(unverifiable)} unverifiable)"
        return RowVerdict(text, "unverifiable", CATEGORIES[2])
    if confirmed:
        return RowVerdict("confirmed", "confirmed", CATEGORIES[3])
    return RowVerdict("unverifiable", "unverifiable", CATEGORIES[4])


def verdict_categories(
    regressions: Iterable[RegressionResult], shown: Iterable[str]
) -> dict[str, int]:
    """Regressions per row-verdict category, only the categories that occur, in CATEGORIES order."""
    shown = tuple(shown)
    counts = {name: 0 for name in CATEGORIES}
    for regression in regressions:
        counts[row_verdict(regression, shown).category] += 1
    return {name: count for name, count in counts.items() if count}


FAILURE_WORDS: dict[str, str] = {
    "file": "could not be read",
    "limit": "stopped at a per-file limit",
    "regaudit": "not audited: a fault in regaudit, not necessarily in the file",
    "cluster": "not audited: the cluster lost the task",
}


def failure_words(workbook: WorkbookResult) -> str:
    """How reports name a workbook that was not audited, from its failure cause."""
    return FAILURE_WORDS[workbook.failure or "file"]
