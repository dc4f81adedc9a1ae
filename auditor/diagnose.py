"""Diagnosis: which named mistake reproduces a reported number that disagrees with the data.

For a reported value whose verdict is "mismatch", three families of hypotheses are tried, and
those whose number agrees with the reported one *at its precision* (:mod:`auditor.compare`) are
returned simplest first, one per kind:

1. formula slips (:data:`auditor.mistakes.HYPOTHESES`): a one-tailed p, SUMSQ for DEVSQ, …;
2. row subsets (:data:`ROW_SUBSETS`): the fit over the rows the author's ranges took in or left
   out. Rows dropped at either end are screened with running sums of the centred cross products,
   so each candidate costs O(1) whatever the table's length; the few that come close are
   confirmed by an exact refit, because sums lose digits that a 1e-9 comparison needs;
3. inherited: the value follows correctly from other reported cells that are wrong themselves
   (``t = E4/E10`` with a stale slope in E4); their explanations carry over.

A typed or stale stored value that nothing reproduces is explained last as ``stale-value``.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import NDArray
from scipy import stats as distributions

from auditor.compare import Agreement, agree_stored, agree_text, agree_typed, parse_text_number
from auditor.fit import fit_ols
from auditor.mistakes import (
    FORMULA_HINTS,
    HYPOTHESES,
    PER_SLOPE,
    Basis,
    Candidate,
    Evidence,
    g,
    pair,
    stat_name,
    two_sided,
)
from auditor.model import ReportedValue, stat_base

if TYPE_CHECKING:  # only annotations: the checks package imports this module (no cycle)
    from auditor.checks.base import RegressionContext
    from auditor.extract import Extracted

Judge = Callable[[float], Agreement]
FloatArray = NDArray[np.float64]
BoolArray = NDArray[np.bool_]
MAX_END_DROP = 5  # rows dropped at each end of the table: ranges set before rows were added
# How extract.py words why a row was left out of, or parsed for, the intended table.
TOTAL_REASON, TEXT_REASON = "total or mean row", "number stored as text"
SCREEN_SLACK = 1e-6  # relative: how close a running-sum candidate must come to be refitted
MAX_DEPTH = 2  # p ← t ← slope: deep enough for every chain a results block builds

# A formula over the whole table for each statistic a stale value should be replaced by.
FORMULAS = {
    "slope": "=SLOPE({y}, {x})",
    "intercept": "=INTERCEPT({y}, {x})",
    "residual_sd": "=STEYX({y}, {x})",
    "r_squared": "=RSQ({y}, {x})",
    "n": "=COUNT({x})",
    "se_slope": "=STEYX({y}, {x})/SQRT(DEVSQ({x}))",
    "df": "=COUNT({x})-2",
}


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

    for candidate in _formula_candidates(basis):
        if judge(candidate.value).agrees:
            keep(candidate)
    for candidate in _subset_candidates(value, context, basis, key, judge, reported):
        keep(candidate)
    for candidate in _inherited(value, context, basis, judge, depth) if depth < MAX_DEPTH else []:
        keep(candidate)
    if not found and _pasted_or_stale(value, context, reported):
        keep(_stale_fallback(value, context, basis, reported))
    return list(found.values())


def _formula_candidates(basis: Basis) -> list[Candidate]:
    candidates = [c for hypothesis in HYPOTHESES.values() for c in hypothesis(basis)]
    formula = basis.formula or ""
    # The formula's own functions (T.DIST.RT, SUMSQ, NORM.S.DIST) name the likelier of two
    # mistakes that give the same number, e.g. one-tailed and left-tailed p for a negative t.
    hinted = {kind for kind, pattern in FORMULA_HINTS.items() if pattern.search(formula)}
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
        critical = float(distributions.t.ppf(1 - alpha / 2, df))
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


def _stale_fallback(
    value: ReportedValue, context: RegressionContext, basis: Basis, reported: float
) -> Candidate:
    name = stat_name(basis.stat, basis.j, context.fit.k)
    intended = g(value.intended) if value.intended is not None else "no value"
    if value.source in ("typed", "text"):
        formula = FORMULAS.get(basis.stat, "a formula over {y} and {x}")
        message = (
            f"the typed {name} {g(reported)} matches no computation from the current data "
            f"(the {context.data.n} rows give {intended}; no slip in a formula and no rows left "
            "out give it): it was typed or pasted before the data changed"
        )
        fix = (
            f"replace the typed value by {formula.format(y=basis.y_range, x=basis.x_range)}, "
            "so that it follows the data"
        )
    else:
        message = (
            f"the stored {name} {g(reported)} is out of date: its formula {value.formula} now "
            f"gives {g(value.as_written or math.nan)} (the intended value is {intended})"
        )
        fix = "recalculate the workbook (or re-enter the formula) and re-check the figures"
    return Candidate("stale-value", reported, message, fix, {"matched": "no current computation"})


# --- row subsets -------------------------------------------------------------------------------


@dataclass(frozen=True)
class RowTable:
    """The rows with numbers in x and y, in sheet order, and the running sums over them."""

    rows: list[int]
    x: FloatArray  # (m, k)
    y: FloatArray
    used: BoolArray  # in the intended table
    as_written: BoolArray
    total: BoolArray
    text: BoolArray  # a number stored as text, parsed for the intended table
    shift: FloatArray  # subtracted from [x..., y] before the sums: the intended means
    outer: FloatArray  # (m, p, p): z zᵀ per row, z = [1, x − shift, y − shift]
    running: FloatArray  # (n + 1, p, p): cumulative sums of ``outer`` over the intended rows
    intercept: bool

    def moments(self, mask: BoolArray) -> FloatArray:
        return np.asarray(self.outer[mask].sum(axis=0), dtype=np.float64)


def _row_table(data: Extracted, intercept: bool) -> RowTable:
    k = data.x.shape[1]
    points = [p for p in data.points if p.y is not None and len(p.x) == k and None not in p.x]
    if sum(p.used for p in points) == data.n:
        rows = [p.row for p in points]
        x = np.array([p.x for p in points], dtype=np.float64).reshape(-1, k)
        y = np.array([p.y for p in points], dtype=np.float64)
        flags = [
            (p.used, p.used_as_written, TOTAL_REASON in p.reason, TEXT_REASON in p.reason)
            for p in points
        ]
    else:  # no row record (data built by hand): the intended rows, numbered from 1
        rows, x, y = list(range(1, data.n + 1)), data.x, data.y
        flags = [(True, True, False, False)] * data.n
    used, as_written, total, text = (
        np.array(f, dtype=bool).reshape(-1) for f in zip(*flags, strict=True)
    )
    # Centring on the intended means keeps the sums' cancellation small (design: fit.py).
    shift = np.zeros(k + 1)
    if intercept and data.n:
        shift = np.append(data.x.mean(axis=0), data.y.mean())
    z = np.column_stack([np.ones(len(rows)), x - shift[:k], y - shift[k]])
    outer = np.einsum("ni,nj->nij", z, z)
    running = np.concatenate([np.zeros((1, k + 2, k + 2)), np.cumsum(outer[used], axis=0)])
    return RowTable(rows, x, y, used, as_written, total, text, shift, outer, running, intercept)


@dataclass(frozen=True)
class Subset:
    source: str  # which hypothesis proposed it
    moments: FloatArray
    ends: tuple[int, int] = (0, 0)  # intended rows dropped at the start and at the end
    mask: BoolArray | None = None  # the rows chosen, when not given by ``ends`` or ``without``
    without: int | None = None  # the one intended row left out (built only when it matches)

    def chosen(self, table: RowTable) -> BoolArray:
        if self.mask is not None:
            return self.mask
        if self.without is not None:
            mask = table.used.copy()
            mask[self.without] = False
            return mask
        positions = np.flatnonzero(table.used)
        mask = np.zeros(len(table.rows), dtype=bool)
        mask[positions[self.ends[0] : len(positions) - self.ends[1]]] = True
        return mask


def rows_as_written(table: RowTable, stale: bool) -> list[Subset]:
    """The rows the author's SLOPE-family formulas see (short ranges, skipped text, totals)."""
    if not table.as_written.any() or (table.as_written == table.used).all():
        return []
    return [Subset("as-written", table.moments(table.as_written), mask=table.as_written)]


def rows_with_total(table: RowTable, stale: bool) -> list[Subset]:
    mask = table.used | table.total
    return [Subset("with-total", table.moments(mask), mask=mask)] if table.total.any() else []


def rows_without_text(table: RowTable, stale: bool) -> list[Subset]:
    mask = table.used & ~table.text
    return [Subset("without-text", table.moments(mask), mask=mask)] if table.text.any() else []


def rows_at_ends(table: RowTable, stale: bool) -> list[Subset]:
    """Up to MAX_END_DROP rows off each end, fewest first and the end before the start."""
    n, k = int(table.used.sum()), table.x.shape[1]
    out = []
    for dropped in range(1, 2 * MAX_END_DROP + 1):
        for at_end in range(min(dropped, MAX_END_DROP), -1, -1):
            at_start = dropped - at_end
            if at_start > MAX_END_DROP or n - dropped < k + 2 + int(table.intercept) - 1:
                continue
            moments = table.running[n - at_end] - table.running[at_start]
            out.append(Subset("ends", moments, ends=(at_start, at_end)))
    return out


def rows_one_out(table: RowTable, stale: bool) -> list[Subset]:
    """A pasted value from before one row was added or changed: the fit without that row."""
    if not stale:
        return []  # a live formula cannot skip one inner row of a contiguous range
    total = table.running[-1]
    return [
        Subset("one-row", total - table.outer[i], without=int(i))
        for i in np.flatnonzero(table.used)
    ]


# Most specific first: what the formulas actually see, then the commonest slips with rows.
ROW_SUBSETS: dict[str, Callable[[RowTable, bool], list[Subset]]] = {
    "rows-as-written": rows_as_written,
    "rows-with-total": rows_with_total,
    "rows-without-text": rows_without_text,
    "rows-at-ends": rows_at_ends,
    "rows-one-out": rows_one_out,
}


def moment_stat(moments: FloatArray, stat: str, j: int, table: RowTable) -> float:
    """One statistic of the fit over a subset, from its sums of cross products alone."""
    k, intercept = table.x.shape[1], table.intercept
    m = float(moments[0, 0])
    df = round(m) - k - int(intercept)
    if stat in ("n", "df"):
        return m if stat == "n" else float(df)
    if df <= 0:
        return math.nan
    mx = moments[0, 1 : k + 1] / m if intercept else np.zeros(k)
    my = float(moments[0, k + 1]) / m if intercept else 0.0
    sxx = moments[1 : k + 1, 1 : k + 1] - m * np.outer(mx, mx)
    sxy = moments[1 : k + 1, k + 1] - m * mx * my
    syy = float(moments[k + 1, k + 1]) - m * my * my
    singular = np.linalg.svd(sxx, compute_uv=False)
    if not singular[-1] > 1e-12 * singular[0]:
        return math.nan  # x constant (or collinear) over the subset: no slope to compare
    inverse = np.linalg.inv(sxx)
    b = inverse @ sxy
    s = math.sqrt(max(syy - float(b @ sxy), 0.0) / df)
    x_mean = mx + table.shift[:k]
    coefficient = {"slope": float(b[j])}
    coefficient["intercept"] = my + float(table.shift[k]) - float(b @ x_mean) if intercept else 0.0
    se = {"slope": s * math.sqrt(inverse[j, j])}
    if intercept:
        se["intercept"] = s * math.sqrt(1.0 / m + float(x_mean @ inverse @ x_mean))
    fam = "intercept" if stat.endswith("intercept") else "slope"
    simple = {
        "residual_sd": s,
        "r_squared": 1.0 - s * s * df / syy if syy > 0 else math.nan,
        fam: coefficient[fam],
    }
    if stat in simple:
        return simple[stat]
    if fam not in se:
        return math.nan
    t = coefficient[fam] / se[fam] if se[fam] > 0 else math.nan
    return {f"se_{fam}": se[fam], f"t_{fam}": t, f"p_{fam}": two_sided(t, df)}.get(stat, math.nan)


def rows_text(rows: list[int]) -> str:
    """[4, 16, 17] -> "rows 4, 16–17"."""
    runs: list[list[int]] = []
    for row in sorted(rows):
        if runs and row == runs[-1][-1] + 1:
            runs[-1].append(row)
        else:
            runs.append([row])
    parts = [f"{r[0]}" if len(r) == 1 else f"{r[0]}–{r[-1]}" for r in runs]
    return ("row " if len(rows) == 1 else "rows ") + ", ".join(parts)


def _subset_candidates(
    value: ReportedValue,
    context: RegressionContext,
    basis: Basis,
    key: str,
    judge: Judge,
    reported: float,
) -> list[Candidate]:
    table = _row_table(context.data, context.fit.intercept)
    stale = _pasted_or_stale(value, context, reported)
    out, seen = [], set()
    for propose in ROW_SUBSETS.values():
        for subset in propose(table, stale):
            approx = moment_stat(subset.moments, basis.stat, basis.j, table)
            if not math.isfinite(approx):
                continue
            allowed = judge(approx).allowed or 0.0
            if abs(approx - reported) > allowed + SCREEN_SLACK * max(abs(reported), abs(approx)):
                continue
            mask = subset.chosen(table)
            if mask.tobytes() in seen:
                continue
            seen.add(mask.tobytes())
            refit = fit_ols(table.x[mask], table.y[mask], intercept=table.intercept)
            exact = refit.stats().get(key)
            if exact is not None and judge(float(exact)).agrees:
                out.append(_subset_candidate(mask, table, value, context, basis, exact, stale))
    return out


def _subset_candidate(
    mask: BoolArray,
    table: RowTable,
    value: ReportedValue,
    context: RegressionContext,
    basis: Basis,
    exact: float,
    stale: bool,
) -> Candidate:
    rows = np.array(table.rows)
    left_out = [int(r) for r in rows[table.used & ~mask]]
    added = [int(r) for r in rows[~table.used & mask]]
    totals = [int(r) for r in rows[~table.used & mask & table.total]]
    texts = [int(r) for r in rows[table.used & ~mask & table.text]]
    name = stat_name(basis.stat, basis.j, context.fit.k)
    shown, intended = pair(exact, value.intended if value.intended is not None else math.nan)
    n = context.data.n
    ranges = f"{basis.y_range} and {basis.x_range}"
    evidence: Evidence = {
        "rows_left_out": rows_text(left_out) if left_out else "",
        "rows_added": rows_text(added) if added else "",
        "n_used": int(mask.sum()),
    }
    if totals:
        message = (
            f"the ranges take in the total {rows_text(totals)}: with it the {name} is "
            f"{shown}; the {n} data rows give {intended}"
        )
        return Candidate(
            "total-row", exact, message, f"end the ranges above the total row: {ranges}", evidence
        )
    if texts:
        cells = [cell for cell, _ in context.data.parsed if _row_of(cell) in texts]
        where = ", ".join(cells) or rows_text(texts)
        message = (
            f"{where} holds a number stored as text, which SLOPE, INTERCEPT, STEYX and RSQ "
            f"skip: without {rows_text(texts)} the {name} is {shown}; with it read as "
            f"a number, {intended}"
        )
        fix = f"convert {where} to a number (re-type it), so that every formula sees it"
        return Candidate("text-number", exact, message, fix, evidence)
    if left_out and not added and stale:
        word = "stored" if value.source == "stored" else "typed"
        message = (
            f"the {word} {name} {shown} matches the data without {rows_text(left_out)} "
            f"(added or changed later?); all {n} rows give {intended}"
        )
        formula = FORMULAS.get(basis.stat, "a formula over {y} and {x}")
        fix = (
            f"replace the value by {formula.format(y=basis.y_range, x=basis.x_range)}, so "
            "that it follows the data"
        )
        return Candidate("stale-value", exact, message, fix, evidence)
    if left_out and not added:
        kept = [int(r) for r in rows[mask]]
        if all(r > kept[-1] for r in left_out):
            where = f"the ranges stop at row {kept[-1]}"
        elif all(r < kept[0] for r in left_out):
            where = f"the ranges start at row {kept[0]}"
        else:
            where = f"the ranges cover rows {kept[0]}–{kept[-1]} only"
        message = (
            f"{where}, leaving out {rows_text(left_out)}: over the {len(kept)} rows left "
            f"the {name} is {shown}; the whole table ({n} rows) gives {intended}"
        )
        return Candidate(
            "range-short",
            exact,
            message,
            f"extend the ranges to the whole table: {ranges}",
            evidence,
        )
    message = (
        f"the {name} {shown} is the fit over {rows_text([int(r) for r in rows[mask]])}"
        f", not over the table's {n} rows ({intended})"
    )
    return Candidate("range-mismatch", exact, message, f"make every formula use {ranges}", evidence)


def _row_of(cell: str) -> int:
    digits = re.search(r"(\d+)$", cell)
    return int(digits.group(1)) if digits else -1
