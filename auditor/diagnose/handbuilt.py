"""Mistakes of hand-built slopes and intercepts: what a covariance over a variance gets wrong.

Each function takes the reported value under review and its regression's context and returns
the :class:`Candidate` numbers the mistake gives; :func:`auditor.diagnose.explain` keeps those
that agree with the reported number at its precision. They work on the rows the author's
formula reads (the as-written ranges), because that is where the mistake was made:

* ``population-sample-mix``: COVAR (or COVARIANCE.P, divide by n) over VAR (or VAR.S, divide
  by n − 1) gives the slope times (n − 1)/n; the reverse mix gives n/(n − 1);
* ``rows-differ``: COVARIANCE.S pairs only the rows where both cells are numbers, VAR.S keeps
  every number of its one range: with text such as "n/a" in y the two sums run over different
  rows, and the ratio is no slope of any data;
* ``copied-block``: an intercept ȳ − b·x̄ (or an average of offsets y − b·x) built with the
  slope of another block, where a copied formula kept an absolute reference such as ``$F$34``.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from auditor.diagnose.basis import Candidate, Evidence, g, pair
from auditor.model import ReportedValue, stat_base

if TYPE_CHECKING:  # only annotations: the checks package imports the diagnosis (no cycle)
    from auditor.context import RegressionContext


def _as_written(context: RegressionContext) -> tuple[np.ndarray, np.ndarray, list[float]]:
    """(x, y) of the rows the formulas pair, and every number of the x range as written."""
    x_all, _ = _all_numbers(context)
    xs, ys = [], []
    for point in context.data.points:
        x = point.x[0] if point.x else None
        if point.used_as_written and x is not None and point.y is not None:
            xs.append(float(x))
            ys.append(float(point.y))
    return np.array(xs), np.array(ys), x_all


def _all_numbers(context: RegressionContext) -> tuple[list[float], list[float]]:
    """Every number of the x range and of the y range as written, paired or not (what VAR,
    STDEV and AVERAGE of one range see)."""
    spec, x_all, y_all = context.spec, [], []
    for point in context.data.points:
        inside = spec.x.r1 <= point.row <= spec.x.r2 if spec.x.cols == 1 else True
        x = point.x[0] if point.x else None
        if inside and x is not None:
            x_all.append(float(x))
        if inside and point.y is not None:
            y_all.append(float(point.y))
    return x_all, y_all


def _rows_note(context: RegressionContext, n: int) -> str:
    if n == context.data.n:
        return ""
    return (
        f" (the formula reads {n} rows; the table {context.data.intended_y_range} holds "
        f"{context.data.n}, and over all of them the slope is {g(context.fit.slopes[0])})"
    )


def population_sample_mix(value: ReportedValue, context: RegressionContext) -> list[Candidate]:
    if stat_base(value.key) != "slope" or context.fit.k != 1 or not context.fit.intercept:
        return []
    x, y, _ = _as_written(context)
    n = int(x.size)
    if n < 3:
        return []
    dx = x - x.mean()
    sxx = float(dx @ dx)
    if sxx <= 0:
        return []
    slope = float(dx @ (y - y.mean())) / sxx
    out = []
    for factor, words, fix in (
        (
            (n - 1) / n,
            "a population covariance (COVAR or COVARIANCE.P, divided by n) over a sample "
            f"variance (VAR or VAR.S, divided by n − 1) gives the slope times (n − 1)/n = "
            f"{n - 1}/{n}",
            "divide like by like: COVARIANCE.S over VAR.S, or COVARIANCE.P over VAR.P "
            "(or use SLOPE(y, x))",
        ),
        (
            n / (n - 1),
            "a sample covariance (COVARIANCE.S, divided by n − 1) over a population variance "
            f"(VAR.P or VARP, divided by n) gives the slope times n/(n − 1) = {n}/{n - 1}",
            "divide like by like: COVARIANCE.S over VAR.S, or COVARIANCE.P over VAR.P "
            "(or use SLOPE(y, x))",
        ),
    ):
        wrong = slope * factor
        shown, right = pair(wrong, slope)
        message = (
            f"{words}: {shown} = {factor:.4g} × {right}, the least-squares slope of the {n} "
            f"rows the formula reads{_rows_note(context, n)}"
        )
        evidence: Evidence = {"factor": factor, "n": n, "slope_of_rows_read": slope}
        out.append(Candidate("population-sample-mix", wrong, message, fix, evidence))
    return out


def rows_differ(value: ReportedValue, context: RegressionContext) -> list[Candidate]:
    if stat_base(value.key) != "slope" or context.fit.k != 1 or not context.fit.intercept:
        return []
    x, y, x_all = _as_written(context)
    y_all = _all_numbers(context)[1]
    n, m = int(x.size), len(x_all)
    if n < 3 or (m <= n and len(y_all) <= n):
        return []
    dx = x - x.mean()
    sxy, sxx = float(dx @ (y - y.mean())), float(dx @ dx)
    spread = np.array(x_all) - float(np.mean(x_all))
    sxx_all = float(spread @ spread)
    if sxx <= 0 or sxx_all <= 0:
        return []
    slope = sxy / sxx
    out = []
    for cov_ddof, var_ddof in ((1, 1), (0, 0), (0, 1), (1, 0)):
        wrong = (sxy / (n - cov_ddof)) / (sxx_all / (m - var_ddof))
        shown, right = pair(wrong, slope)
        message = (
            f"the covariance pairs only the {n} rows where both y and x are numbers, but the "
            f"variance of x takes all {m} numbers of its range ({m - n} rows whose y is text "
            f"or empty count in the denominator only): the ratio is {shown}, while the slope of "
            f"the {n} paired rows is {right}"
        )
        fix = (
            "compute both sums over the same rows: SLOPE(y, x) pairs them itself; or leave x "
            "empty where y has no value"
        )
        evidence: Evidence = {"pairs": n, "x_numbers": m, "slope_of_pairs": slope}
        out.append(Candidate("rows-differ", wrong, message, fix, evidence))
    dy = y - y.mean()
    syy, k = float(dy @ dy), len(y_all)
    if syy > 0 and k > 1 and m > 1:
        spread_y = np.array(y_all) - float(np.mean(y_all))
        ratio = math.sqrt((float(spread_y @ spread_y) / (k - 1)) / (sxx_all / (m - 1)))
        wrong = sxy / math.sqrt(sxx * syy) * ratio
        shown, right = pair(wrong, slope)
        message = (
            f"the correlation pairs only the {n} rows where both y and x are numbers, but the "
            f"standard deviations take every number of their own range ({k} in y, {m} in x): "
            f"r·s_y/s_x is {shown}, while the slope of the {n} paired rows is {right}"
        )
        fix = "use SLOPE(y, x), which pairs the rows itself"
        evidence = {"pairs": n, "x_numbers": m, "y_numbers": k, "slope_of_pairs": slope}
        out.append(Candidate("rows-differ", wrong, message, fix, evidence))
    return out


def intercept_from_other_slope(value: ReportedValue, context: RegressionContext) -> list[Candidate]:
    if stat_base(value.key) != "intercept" or context.fit.k != 1:
        return []
    stat = context.spec.stats.get(value.key)
    computes = stat.computes if stat is not None else {}
    cell, slope = computes.get("slope_cell"), computes.get("slope_value")
    read_by = computes.get("read_by")
    if not isinstance(cell, str) or not isinstance(slope, float):
        return []
    own = [s.cell.address for k, s in context.spec.stats.items() if stat_base(k) == "slope"]
    if cell in own or not own:
        return []
    x, y, _ = _as_written(context)
    if x.size < 3 or not math.isfinite(slope):
        return []
    wrong = float(y.mean()) - slope * float(x.mean())
    own_slope = float(context.fit.slopes[0])
    through = (
        f" ({read_by} compute each row's offset y − b·x with it, and the intercept averages them)"
        if isinstance(read_by, str)
        else ""
    )
    message = (
        f"the intercept is ȳ − b·x̄ with b = {g(slope)} from {cell}{through}, the slope of another "
        f"block (a copied formula kept its absolute reference), not this block's own slope "
        f"{g(own_slope)} in {own[0]}: {g(float(y.mean()))} − {g(slope)} × {g(float(x.mean()))} "
        f"= {g(wrong)}"
    )
    fix = f"point the formulas at this block's own slope, {own[0]}, instead of {cell}"
    evidence: Evidence = {"slope_cell": cell, "slope_used": slope, "own_slope_cell": own[0]}
    if isinstance(read_by, str):
        evidence["read_by"] = read_by
    return [Candidate("copied-block", wrong, message, fix, evidence)]


CONTEXT_HYPOTHESES = (population_sample_mix, rows_differ, intercept_from_other_slope)


def handbuilt_candidates(value: ReportedValue, context: RegressionContext) -> list[Candidate]:
    """Every candidate of the hand-built mistakes for one reported value."""
    return [c for hypothesis in CONTEXT_HYPOTHESES for c in hypothesis(value, context)]
