"""Diagnosis: which named mistake reproduces a reported number that disagrees with the data.

For a reported value whose verdict is "mismatch", three families of hypotheses are tried, and
those whose number agrees with the reported one *at its precision*
(:mod:`auditor.compare.precision`) are
returned simplest first, one per kind:

1. formula slips (:data:`auditor.diagnose.mistakes.MISTAKES`): a one-tailed p, SUMSQ for DEVSQ, …;
2. row subsets (:data:`auditor.diagnose.rowsearch.ROW_SUBSETS`): the fit over the rows the author's
ranges
   took in or left out. Rows dropped at either end are screened with running sums of the centred
   cross products, so each candidate costs O(1) whatever the table's length; the few that come
   close are confirmed here by an exact refit, because sums lose digits that a 1e-9 comparison
   needs; :mod:`auditor.diagnose.rows` words them;
3. inherited: the value follows correctly from other reported cells that are wrong themselves
   (``t = E4/E10`` with a stale slope in E4); their explanations carry over.

A typed or stale stored value that nothing reproduces is explained last as ``stale-value``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

from auditor.compare.precision import agree_stored, agree_text, agree_typed, parse_text_number
from auditor.diagnose.handbuilt import handbuilt_candidates
from auditor.diagnose.mistakes import (
    MISTAKES,
    PER_SLOPE,
    Basis,
    Candidate,
    stat_name,
    two_sided,
)
from auditor.diagnose.rows import FORMULAS, stale_fallback, subset_candidate
from auditor.diagnose.rowsearch import (
    MAX_END_DROP,
    ROW_SUBSETS,
    SCREEN_SLACK,
    TEXT_REASON,
    TOTAL_REASON,
    BoolArray,
    FloatArray,
    Judge,
    RowTable,
    Subset,
    moment_stat,
    near_subsets,
    row_table,
    rows_as_written,
    rows_at_ends,
    rows_one_out,
    rows_with_total,
    rows_without_text,
)
from auditor.fit.distributions import t_ppf
from auditor.fit.ols import fit_ols
from auditor.model import ReportedValue, stat_base
from auditor.wording import rows_text

if TYPE_CHECKING:  # only annotations: the checks package imports this module (no cycle)
    from auditor.context import RegressionContext

# What other modules and tests have imported from here since the row search moved out.
__all__ = [
    "FORMULAS",
    "MAX_END_DROP",
    "ROW_SUBSETS",
    "SCREEN_SLACK",
    "TEXT_REASON",
    "TOTAL_REASON",
    "BoolArray",
    "Explanation",
    "FloatArray",
    "Judge",
    "RowTable",
    "Subset",
    "explain",
    "moment_stat",
    "rows_as_written",
    "rows_at_ends",
    "rows_one_out",
    "rows_text",
    "rows_with_total",
    "rows_without_text",
]
_row_table = row_table  # the name tests/test_diagnose.py imports
MAX_DEPTH = 2  # p ← t ← slope: deep enough for every chain a results block builds


@dataclass(frozen=True)
class Explanation:
    kind: str  # from the design's list of kinds, or one added here where none fits
    reproduced: float  # the number the mistake gives
    message: str  # in the reviewer's words, with both numbers
    fix: str
    evidence: dict[str, float | int | str]


def explain(value: ReportedValue, context: RegressionContext) -> list[Explanation]:
    """The mistakes that reproduce a mismatched reported value, simplest first, one per kind."""
    return _explain(value, context, 0)


def _explain(value: ReportedValue, context: RegressionContext, depth: int) -> list[Explanation]:
    reported = _reported_number(value)
    if value.verdict != "mismatch" or reported is None or context.data.n == 0:
        return []
    judge = _judge(value, context, reported)
    key = stat_base(value.key)
    stat, _, column = key.partition("[")
    j = int(column.rstrip("]")) - 1 if column else 0
    basis = Basis(
        context.fit,
        context.data.x,
        context.data.y,
        stat,
        j,
        value.formula,
        _local(context.data.intended_x_range, value.cell),
        _local(context.data.intended_y_range, value.cell),
    )
    found: dict[str, Explanation] = {}

    def keep(c: Candidate) -> None:
        if c.kind not in found:
            # Said once, by the cell under review; a cell it is built from only says what it is.
            ending = _consequence(stat, reported, value.intended, context) if depth == 0 else ""
            number = float(c.value)  # numpy scalars out: the evidence goes into JSON
            evidence = c.evidence | {"reported": reported, "reproduced": number}
            found[c.kind] = Explanation(c.kind, number, c.message + ending, c.fix, evidence)

    for candidate in _formula_candidates(basis) + handbuilt_candidates(value, context):
        if judge(candidate.value).agrees:
            keep(candidate)
    for candidate in _subset_candidates(value, context, basis, key, judge, reported):
        keep(candidate)
    for candidate in _inherited(value, context, basis, judge, depth) if depth < MAX_DEPTH else []:
        keep(candidate)
    if not found and _pasted_or_stale(value, context, reported):
        keep(stale_fallback(value, context, basis, reported))
    return list(found.values())


def _formula_candidates(basis: Basis) -> list[Candidate]:
    candidates = [c for mistake in MISTAKES for c in mistake.hypothesis(basis)]
    formula = basis.formula or ""
    # The formula's own functions (T.DIST.RT, SUMSQ, NORM.S.DIST) name the likelier of two
    # mistakes that give the same number, e.g. one-tailed and left-tailed p for a negative t.
    hinted = {m.kind for m in MISTAKES if m.hint is not None and m.hint.search(formula)}
    return sorted(candidates, key=lambda c: c.kind not in hinted)


def _reported_number(value: ReportedValue) -> float | None:
    raw = value.value
    if isinstance(raw, str):
        return parse_text_number(raw)  # a claim such as "<0.001" reproduces nothing exactly
    if isinstance(raw, bool) or raw is None or not math.isfinite(raw):
        return None
    return float(raw)


def _judge(value: ReportedValue, context: RegressionContext, reported: float) -> Judge:
    """Agreement at the precision the reported value carries, as the verdict itself was made."""
    raw = value.value
    if isinstance(raw, str):
        return lambda candidate: agree_text(raw, candidate)
    if value.source == "typed":
        stat = context.spec.stats.get(value.key)
        number_format = stat.cell.number_format if stat is not None else "General"
        return lambda candidate: agree_typed(reported, candidate, number_format)
    rel = context.policy.get("stored_relative_tolerance")
    # An intercept that should be near 0 is judged against the slope's scale (as reported.py).
    scale = abs(float(context.fit.slopes[0])) if "intercept" in value.key else None
    return lambda candidate: agree_stored(reported, candidate, rel=rel, scale=scale)


def _pasted_or_stale(value: ReportedValue, context: RegressionContext, reported: float) -> bool:
    """A typed constant, or a stored value its own formula no longer gives."""
    if value.source in ("typed", "text"):
        return True
    if value.source != "stored" or value.as_written is None:
        return False
    rel = context.policy.get("stored_relative_tolerance")
    return agree_stored(reported, value.as_written, rel=rel).agrees is False


def _local(range_text: str, cell: str) -> str:
    """A range as a formula in ``cell`` writes it: no sheet on its own sheet, quoted elsewhere."""
    sheet, _, block = range_text.rpartition("!")
    if not sheet or sheet == cell.rpartition("!")[0]:
        return block or range_text
    plain = sheet.replace("_", "").isalnum()
    return f"{sheet}!{block}" if plain else "'" + sheet.replace("'", "''") + f"'!{block}"


def _consequence(
    stat: str, reported: float, intended: float | None, context: RegressionContext
) -> str:
    """What the wrong number changes for a reader: significance at the policy's alpha, or sign."""
    if intended is None or not math.isfinite(intended):
        return ""
    alpha, df = context.policy.alpha, context.fit.df
    what = "slope" if stat.endswith("slope") else "intercept"
    if stat.startswith("p_"):
        claimed, true = reported < alpha, intended < alpha
    elif stat.startswith("t_") and df > 0:
        critical = float(t_ppf(1 - alpha / 2, df))
        claimed, true = abs(reported) > critical, abs(intended) > critical
    elif stat == "slope" and reported * intended < 0:
        return "; the reported slope has the wrong sign"
    else:
        return ""
    if claimed == true:
        return ""
    return f"; at alpha {alpha:g} the {what} is in fact {'' if true else 'not '}significant"


def _inherited(
    value: ReportedValue, context: RegressionContext, basis: Basis, judge: Judge, depth: int
) -> list[Candidate]:
    """The value is right for the reported cells it is built from; explain those instead."""
    recipe = _recipe(context, basis)
    if recipe is None:
        return []
    computed, inputs = recipe
    if not math.isfinite(computed) or not judge(computed).agrees:
        return []
    out = []
    for upstream in inputs:
        if upstream.verdict != "mismatch":
            continue
        base, _, column = stat_base(upstream.key).partition("[")
        name = stat_name(base, int(column.rstrip("]") or 1) - 1, context.fit.k)
        for e in _explain(upstream, context, depth + 1):
            chained = e.message.startswith("it follows from ")
            tail = e.message[3:] if chained else f"is wrong: {e.message}"
            message = f"it follows from the {name} in {upstream.cell}, which {tail}"
            evidence = e.evidence | {"from_cell": upstream.cell}
            out.append(Candidate(e.kind, computed, message, e.fix, evidence))
    return out


def _recipe(context: RegressionContext, basis: Basis) -> tuple[float, list[ReportedValue]] | None:
    """How a results block builds this statistic from other cells (t = b/SE, p from t and df)."""
    fit, fam = context.fit, basis.family
    suffix = f"[{basis.j + 1}]" if fit.k > 1 and basis.stat in PER_SLOPE else ""
    intended = fit.stats()
    inputs: list[ReportedValue] = []

    def look(key: str) -> float:
        found = context.reported.get(key)
        number = _reported_number(found) if found is not None else None
        if found is not None and number is not None:
            inputs.append(found)
            return number
        fallback = intended.get(key)
        return float(fallback) if fallback is not None else math.nan

    if basis.stat == f"t_{fam}":
        coef, se = look(fam + suffix), look(f"se_{fam}{suffix}")
        return (coef / se if se else math.nan), inputs
    if basis.stat == f"p_{fam}":
        t, df = look(f"t_{fam}{suffix}"), look("df")
        return two_sided(t, df), inputs
    if basis.stat == "se_slope" and fit.k == 1 and fit.sxx > 0:
        return look("residual_sd") / math.sqrt(fit.sxx), inputs
    if basis.stat == "df":
        return look("n") - fit.n + fit.df, inputs
    return None


def _subset_candidates(
    value: ReportedValue,
    context: RegressionContext,
    basis: Basis,
    key: str,
    judge: Judge,
    reported: float,
) -> list[Candidate]:
    table = row_table(context.data, context.fit.intercept)
    stale = _pasted_or_stale(value, context, reported)
    out = []
    for mask in near_subsets(table, basis.stat, basis.j, reported, judge, stale):
        # Looked up here, not in rowsearch, so the refits stay countable (tests patch fit_ols).
        refit = fit_ols(table.x[mask], table.y[mask], intercept=table.intercept)
        exact = refit.stats().get(key)
        if exact is not None and judge(float(exact)).agrees:
            out.append(subset_candidate(mask, table, value, context, basis, exact, stale))
    return out
