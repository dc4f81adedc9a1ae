"""Roles from words: the labels, units and titles say which quantity is y and which is x.

Formulas alone cannot show a regression fitted the wrong way round when every cell does it the
same way, nor a y range that reads the column beside the one meant: the numbers agree with
themselves. The words can (:mod:`auditor.locate.meaning` reads them,
:mod:`auditor.diagnose.roles_words` judges them): a slope labelled ``L fuel per t load`` is fuel
on load whatever the formulas fit. Each finding quotes the words and both headers, and gives
the fit the words describe, recomputed.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

from auditor.checks.axis_support import (
    conclusion_changes,
    mirrored,
    offset_words,
    paired_fit,
    read_elsewhere,
    symmetric_only,
    values,
)
from auditor.checks.base import check
from auditor.checks.formula_support import local_text
from auditor.context import WorkbookContext
from auditor.diagnose.roles_words import Judgement, judge_roles
from auditor.locate.meaning import Header, Meaning, read_meaning
from auditor.locate.spec import RegressionSpec
from auditor.model import Finding, RegressionResult, Severity, stat_base
from auditor.read.workbook import Workbook
from auditor.wording import fmt

# The statistics a swap of x and y changes (t, p, R² and r are symmetric in x and y).
ROLE_STATS = ("slope", "intercept", "se_slope", "se_intercept", "residual_sd")


@dataclass(frozen=True)
class WordsRead:
    """What the words say of one regression: its meaning and the two judgements (a shift is
    judged only where no swap is: words that give the other roles are the swap check's)."""

    spec: RegressionSpec
    result: RegressionResult
    meaning: Meaning
    swap: Judgement | None
    shift: Judgement | None


def _read(context: WorkbookContext) -> list[WordsRead]:
    """The words of every regression, read once and carried on the context (both checks
    use them)."""
    if context.words is None:
        context.words = []
        for spec, result in _regressions(context):
            assert context.workbook is not None
            meaning = read_meaning(context.workbook, spec)
            swap, shift = judge_roles(meaning)  # a shift only where no swap is judged
            context.words.append(WordsRead(spec, result, meaning, swap, shift))
    return list(context.words)


def _regressions(context: WorkbookContext) -> Iterator[tuple[RegressionSpec, RegressionResult]]:
    if context.workbook is None:
        return
    for spec, result in zip(context.specs, context.results, strict=False):
        if spec.x_columns == 1 and spec.pasted is None and (result.reported or spec.trendlines):
            yield spec, result


def _cells(result: RegressionResult, keys: tuple[str, ...] | None = None) -> list[str]:
    """Reported cells, the slope first (a finding is routed to its first cell's regression)."""
    values = sorted(result.reported.values(), key=lambda v: stat_base(v.key) != "slope")
    cells = [v.cell for v in values if keys is None or stat_base(v.key) in keys]
    return list(dict.fromkeys(cells)) or ([] if keys else [result.y_range])  # a trendline


def _quoted(judgement: Judgement) -> str:
    said = [f"'{cue.statement.text}' ({cue.statement.cell})" for cue in judgement.cues]
    return ", ".join(dict.fromkeys(said))


def _said(judgement: Judgement) -> dict[str, list[str]]:
    statements = list(dict.fromkeys(cue.statement for cue in judgement.cues))
    return {"words": [s.text for s in statements], "word_cells": [s.cell for s in statements]}


def _header(header: Header) -> str:
    return f"{header.ref.address} (headed '{header.text}' in {header.cell})"


def _strength(judgement: Judgement) -> str:
    if any(c.strong and c.statement.factual for c in judgement.cues):
        return "unit"
    if any(c.strong for c in judgement.cues):
        return "quantity named"
    return "conventions agree" if judgement.strong else "title order"


def _weak_reason(judgement: Judgement) -> str:
    if any(cue.strong for cue in judgement.cues):
        return ""
    if judgement.strong:
        return (
            f" No unit says so, but two conventions (common practice) agree: "
            f"{' and '.join(judgement.conventions)}; no word says otherwise."
        )
    return (
        " Only a title says so, and a title's order (y first) is a convention, not a fact: "
        "unverifiable from the words alone."
    )


@check(
    "axis-words-swapped",
    "The labels, units or title name the formulas' x as y and their y as x (a consistent swap).",
    scope="workbook",
)
def axis_words_swapped(context: WorkbookContext) -> list[Finding]:
    """Every cell fits the same ranges, the numbers agree, but the words give the other roles.

    Failing: ``=INDEX(LINEST(C2:C15,B2:B15),1,1)`` with B headed ``Fuel (L)``, C headed
    ``Load (t)`` and the label ``Slope (L fuel per t load)``: the slope's unit says fuel is y.
    Passing: the same label over ``=INDEX(LINEST(B2:B15,C2:C15),1,1)``; or headers ``x`` and
    ``y`` (no quantity named); or a label and a title that contradict each other.
    """
    findings = []
    for read in _read(context):
        if read.swap is None or symmetric_only(read.spec) or mirrored(context, read.spec):
            continue
        assert context.workbook is not None
        findings.append(
            _swap_finding(context.workbook, read.spec, read.result, read.meaning, read.swap)
        )
    return findings


def _swap_finding(
    workbook: Workbook,
    spec: RegressionSpec,
    result: RegressionResult,
    meaning: Meaning,
    judgement: Judgement,
) -> Finding:
    assert meaning.x is not None and meaning.y is not None
    as_words = paired_fit(values(workbook, spec.x), values(workbook, spec.y), spec.intercept)
    changed = _cells(result, ROLE_STATS)
    severity: Severity = "major" if judgement.strong and changed else "minor"
    evidence: dict[str, object] = {
        "x_header": meaning.x.text,
        "y_header": meaning.y.text,
        **_said(judgement),
        "strength": _strength(judgement),
        "slope_as_written": result.intended.get("slope"),
    }
    refit = ""
    if as_words is not None:
        stats = as_words.stats()
        evidence["slope_as_words_say"] = stats.get("slope")
        evidence["intercept_as_words_say"] = stats.get("intercept")
        refit = (
            f" Fitted as the words say ({meaning.x.text} on {meaning.y.text}), the slope is "
            f"{fmt(stats.get('slope'))} and the intercept {fmt(stats.get('intercept'))}, against "
            f"{fmt(result.intended.get('slope'))} and {fmt(result.intended.get('intercept'))} "
            "as written; t, p and R² are the same either way (symmetric in x and y), so the "
            "significance stands."
        )
    home = spec.sheet
    words_y, words_x = local_text(spec.x.address, home), local_text(spec.y.address, home)
    message = (
        f"The formulas fit {_header(meaning.y)} on {_header(meaning.x)}, but the words "
        f"{_quoted(judgement)} name "
        f"'{meaning.x.text}' as y and '{meaning.y.text}' as x.{refit}{_weak_reason(judgement)}"
    )
    if judgement.strong and not changed:
        message += (
            " No value reported here depends on the roles (t, p and R² do not), so it is a risk "
            "for what is built on the line, not a wrong number."
        )
    return Finding(
        check="axis-words-swapped",
        kind="xy-swapped",
        severity=severity,
        cells=_cells(result),
        message=message,
        evidence=evidence,
        fix=f"If the words are right, give {words_y} as y and {words_x} as x in every formula "
        f"of the block (the slope would then be =SLOPE({words_y},{words_x})); if the formulas "
        "are right, correct the labels.",
    )


@check(
    "axis-words-next-column",
    "The words name the quantity of the column beside the range a formula reads (a shifted range).",
    scope="workbook",
    thresholds=("alpha",),
)
def axis_words_next_column(context: WorkbookContext) -> list[Finding]:
    """A y (or x) range whose header names another quantity than the words, while the column
    beside it is headed with the words' quantity.

    Failing: ``=SLOPE(C2:C20,A2:A20)`` labelled ``Slope (cm per day)`` where A is ``Day``, B
    ``Shoot height (cm)`` and C ``Leaf count``: the y range is one column over.
    Passing: ``=SLOPE(B2:B20,A2:A20)`` under that label; or a label naming no quantity of the
    table (``Slope``), or words that name both columns.
    """
    findings = []
    for read in _read(context):
        judgement, spec = read.shift, read.spec
        if judgement is None or judgement.meant is None or judgement.read is None:
            continue
        if symmetric_only(spec) or read_elsewhere(context, spec, judgement.meant.ref):
            continue
        assert context.workbook is not None
        alpha = context.policy.alpha if context.policy is not None else 0.05
        findings.append(_shift_finding(context.workbook, spec, read.result, judgement, alpha))
    return findings


def _shift_finding(
    workbook: Workbook,
    spec: RegressionSpec,
    result: RegressionResult,
    judgement: Judgement,
    alpha: float,
) -> Finding:
    assert judgement.meant is not None and judgement.read is not None
    meant, read = judgement.meant, judgement.read
    y_meant = meant.ref if judgement.role == "y" else spec.y
    x_meant = meant.ref if judgement.role == "x" else spec.x
    written = paired_fit(values(workbook, spec.y), values(workbook, spec.x), spec.intercept)
    intended = paired_fit(values(workbook, y_meant), values(workbook, x_meant), spec.intercept)
    severity: Severity = "major" if judgement.strong else "minor"
    evidence: dict[str, object] = {
        "role": judgement.role,
        "header_read": read.text,
        "range_read": read.ref.address,
        "header_meant": meant.text,
        "range_meant": meant.ref.address,
        **_said(judgement),
        "strength": _strength(judgement),
    }
    refit = ""
    if written is not None and intended is not None:
        a, b = written.stats(), intended.stats()
        evidence.update(
            slope_as_written=a.get("slope"), p_as_written=a.get("p_slope"),
            slope_as_words_say=b.get("slope"), p_as_words_say=b.get("p_slope"),
        )  # fmt: skip
        changes = conclusion_changes(a, b, alpha)
        if changes and judgement.strong:
            severity = "critical"
        refit = (
            f" With {meant.ref.address} the slope is {fmt(b.get('slope'))} (p = "
            f"{fmt(b.get('p_slope'))}), against {fmt(a.get('slope'))} (p = "
            f"{fmt(a.get('p_slope'))}) as written{changes}."
        )
    home = spec.sheet
    message = (
        f"The formulas read {judgement.role} from {_header(read)}, but the "
        f"words {_quoted(judgement)} name '{meant.text}', the header of {meant.ref.address} "
        f"beside it ({meant.cell}): the range looks moved "
        f"{offset_words(read.ref, meant.ref)}.{refit}{_weak_reason(judgement)}"
    )
    return Finding(
        check="axis-words-next-column",
        kind="range-shifted",
        severity=severity,
        cells=_cells(result),
        message=message,
        evidence=evidence,
        fix=f"Point the {judgement.role} range of every formula of the block at "
        f"{local_text(meant.ref.address, home)} ('{meant.text}') (the slope would then be "
        f"=SLOPE({local_text(y_meant.address, home)},{local_text(x_meant.address, home)})), "
        "or correct the labels.",
    )
