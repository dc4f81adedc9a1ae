"""Workbook-level checks: facts about the file that qualify every regression in it."""

from __future__ import annotations

from auditor.checks.base import check
from auditor.context import WorkbookContext
from auditor.model import Finding


@check(
    "no-stored-values",
    "The file carries no stored values: 'reported' is the tool's own.",
    scope="workbook",
)
def no_stored_values(context: WorkbookContext) -> list[Finding]:
    """Files written by scripts often hold formulas with no cached results (or zeros).

    Failing: every formula cell stores 0 or nothing (written by a script, never opened).
    Passing: the file was saved by a spreadsheet application, so each formula has its result.
    """
    if context.stored_values or context.formula_count == 0:
        return []
    return [
        Finding(
            check="no-stored-values",
            severity="info",
            message=(
                f"None of the {context.formula_count} formulas carries a stored value, so the "
                "file was written by a script and never recalculated. The 'reported' values "
                "below are the tool's own evaluation of each formula, not what an author saw."
            ),
            fix="Open and save the file in a spreadsheet application if the values the "
            "author saw must be checked.",
        )
    ]


@check(
    "formula-unreadable",
    "A formula could not be parsed, so its cell was not audited.",
    scope="workbook",
)
def formula_unreadable(context: WorkbookContext) -> list[Finding]:
    """Report formulas the parser could not read instead of skipping them silently.

    Failing: a cell holding ``=SLOPE(B2:B9,,`` (damaged text).
    Passing: every formula parses.
    """
    return [
        Finding(
            check="formula-unreadable",
            severity="minor",
            cells=[cell],
            message=f"The formula in {cell} could not be read: {why}",
            fix="Check the formula by hand.",
        )
        for cell, why in context.unparsed
    ]
