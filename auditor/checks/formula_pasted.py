"""Pasted results: a reported statistic typed as a number where its block computes the others.

Kind ``stale-value``: a value pasted over a formula is frozen at the data it was computed from.
While it still agrees it is a risk (minor) that goes stale at the next edit of the data; when it
disagrees it *is* stale (major, critical when it changes the conclusion). ``hardcoded-constant``
is kept for counts typed *inside* formulas (typed-count-in-formula).

A block whose statistics are all typed (transcribed from instrument software) is not judged
here: nothing beside it shows that a formula belonged there.
"""

from __future__ import annotations

from auditor.checks.agreement_words import describe
from auditor.checks.base import check
from auditor.checks.block_moves import translate
from auditor.checks.formula_blocks import Block, workbook_blocks
from auditor.checks.formula_support import local_text, reached_cells, severity_in_result
from auditor.context import WorkbookContext
from auditor.model import Finding, ReportedValue, Severity, stat_base
from auditor.read.workbook import Cell
from auditor.wording import fmt

MIN_FORMULAS_BESIDE = 2  # formulas in the same block that show it is a computed block

# What to put back, where no sibling block shows the formula.
TEMPLATES = {
    "slope": "=SLOPE({y},{x})",
    "intercept": "=INTERCEPT({y},{x})",
    "residual_sd": "=STEYX({y},{x})",
    "r_squared": "=RSQ({y},{x})",
    "r": "=CORREL({y},{x})",
    "n": "=COUNT({x})",
    "df": "=COUNT({x})-2",
    "se_slope": "=STEYX({y},{x})/SQRT(DEVSQ({x}))",
}


def _typed_number(value: object) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    return float(value)


def _in_array(context: WorkbookContext, cell: Cell) -> bool:
    """A cell of an array formula's block holds a computed value, not a typed one."""
    anchors = getattr(context.workbook, "array_anchors", None) or {}
    return (cell.sheet, cell.row, cell.col) in anchors


def _reported(block: Block, cell: str) -> ReportedValue | None:
    return next((v for v in block.result.reported.values() if v.cell == cell), None)


def _fix(block: Block, key: str, cell: str, model: tuple[Block, str, str] | None) -> str:
    if model is not None:
        source, formula, sheet = model
        return f"Enter the formula again: {translate(formula, source, sheet, block)}"
    sheet = cell.rpartition("!")[0]
    template = TEMPLATES.get(stat_base(key))
    if template is None:
        return "Replace the typed value by the formula that computes it from the data."
    x, y = (local_text(r.address, sheet) for r in (block.spec.x, block.spec.y))
    return f"Enter a formula instead of the typed value: {template.format(x=x, y=y)}"


@check(
    "pasted-result",
    "A reported statistic is a typed value where the rest of its block, or its sibling "
    "blocks, compute it with formulas.",
    scope="workbook",
)
def pasted_result(context: WorkbookContext) -> list[Finding]:
    """A value pasted over a formula no longer follows the data.

    Failing: ``E4`` holds the typed slope -0.02475 while E5:E12 are formulas and the data now
    give -0.03553 (major; critical here, since the t and p built on it cross alpha); a typed
    0.4507 that still agrees with the data's 0.45071 (minor).
    Passing: a report sheet whose values are all typed, rounded to the digits shown; or every
    reported cell a formula.
    """
    blocks, groups = workbook_blocks(context)
    siblings: dict[int, list[Block]] = {}
    for group in groups:
        for block in group:
            siblings[block.index] = [b for b in group if b is not block]
    findings = []
    for block in blocks:
        computed = [s for s in block.spec.stats.values() if s.cell.formula]
        for position, stat in block.cells.items():
            typed = _typed_number(stat.cell.value)
            if stat.cell.formula or typed is None or _in_array(context, stat.cell):
                continue
            model = next(
                (
                    (
                        other,
                        other.cells[position].cell.formula or "",
                        other.cells[position].cell.sheet,
                    )
                    for other in siblings.get(block.index, [])
                    if position in other.cells and other.cells[position].cell.formula
                ),
                None,
            )
            if len(computed) < MIN_FORMULAS_BESIDE and model is None:
                continue
            findings.append(_finding(context, block, stat.key, stat.cell.address, typed, model))
    return findings


def _finding(
    context: WorkbookContext,
    block: Block,
    key: str,
    cell: str,
    typed: float,
    model: tuple[Block, str, str] | None,
) -> Finding:
    value = _reported(block, cell)
    reached = reached_cells(block.spec, cell, context.parsed)
    beside = (
        f"the same cell of its sibling, {model[0].name}, is the formula {model[1]}"
        if model is not None
        else "the rest of its block is computed by formulas"
    )
    severity: Severity = "minor"
    if value is not None and value.intended is not None and value.verdict == "mismatch":
        severity = severity_in_result(block.result, reached)
        if severity == "minor":
            severity = "major"
        now = (
            f"the {block.result.n} points of {block.result.intended_y_range} now give "
            f"{fmt(value.intended)}: the pasted value is out of date"
        )
    elif value is not None and value.intended is not None:
        now = (
            f"it still agrees with the data ({fmt(value.intended)}; {value.tolerance}), but it "
            "will not follow them when they change"
        )
    else:
        now = "it cannot follow the data when they change"
    name = describe(key)
    return Finding(
        check="pasted-result",
        kind="stale-value",
        severity=severity,
        cells=[cell] + [c for c in reached if c != cell],
        message=f"{cell} holds the typed {name} {fmt(typed)} while {beside}; {now}.",
        evidence={
            "typed": typed,
            "intended": value.intended if value is not None else None,
            "block": block.name,
        },
        fix=_fix(block, key, cell, model),
    )
