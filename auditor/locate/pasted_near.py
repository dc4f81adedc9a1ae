"""A pasted table whose data changed: the near match that says "stale", with its evidence.

Tried when no data reproduce the table, in this order:

* the column that still gives most rows of the residual output (y = predicted + residual), and
  the x the predicted values imply (one x) or the x columns the table names beside it; when every
  row still agrees, the data did not change and the table's own numbers were edited instead;
* a y that still has the table's total sum of squares with the named x columns beside it;
* the columns headed by the table's own names (x labels, y from the residual output's header);
* the pair of lines that gives every number once one reading is put back (one x).
"""

from __future__ import annotations

import numpy as np

from auditor.formula.syntax import Ref
from auditor.locate.pasted_data import DataIndex, Run, Source, Windows, block_ref
from auditor.locate.pasted_reading import one_reading
from auditor.locate.pasted_record import PastedTable
from auditor.read.workbook import Workbook


def near_match(
    workbook: Workbook,
    table: PastedTable,
    index: DataIndex,
    y_candidates: tuple[Windows, np.ndarray],
    searched: str,
) -> Source:
    by_rows = _from_residual_output(workbook, table, index)
    if by_rows is not None:
        x_ref, y_ref, evidence = by_rows
        # Every row still follows the residual output: the data did not change, so the table's
        # own numbers were edited after pasting; they are compared with these data one by one.
        status = "reproduced" if evidence.startswith("every row") else "stale"
        return Source(status, x_ref, y_ref, evidence=evidence, searched=searched)
    by_total = _total_and_names(workbook, table, index, *y_candidates)
    if by_total is not None:
        x_ref, y_ref, evidence = by_total
        return Source("stale", x_ref, y_ref, evidence=evidence, searched=searched)
    by_words = _named_columns(workbook, table, index)
    if by_words is not None:
        x_ref, y_ref = by_words
        return Source(
            "stale",
            x_ref,
            y_ref,
            evidence="the columns the table names ("
            + ", ".join([table.y_label, *table.x_labels])
            + f") hold {table.n} values each, but their fit no longer gives the pasted figures",
            searched=searched,
        )
    by_reading = one_reading(workbook, table, index)
    if by_reading is not None:
        x_ref, y_ref, evidence = by_reading
        return Source("stale", x_ref, y_ref, evidence=evidence, searched=searched)
    return Source("none", searched=searched)


def _named_columns(
    workbook: Workbook, table: PastedTable, index: DataIndex
) -> tuple[Ref, Ref] | None:
    """y and x runs of exactly n values headed by the names the table uses, on one sheet."""
    if not table.y_label or not all(table.x_labels):
        return None
    names = [table.y_label, *table.x_labels]
    found: dict[tuple[str, bool, int], dict[str, Run]] = {}
    for run in index.runs:
        if len(run.values) != table.n:
            continue
        header = run.header(workbook, 0).lower()
        for name in names:
            if header == name.lower():
                found.setdefault((run.sheet, run.by_rows, run.start), {})[name.lower()] = run
    for named in found.values():
        if all(name.lower() in named for name in names):
            x_runs = [named[name.lower()] for name in table.x_labels]
            if any(b.line != a.line + 1 for a, b in zip(x_runs, x_runs[1:], strict=False)):
                continue
            return block_ref(x_runs, table.n, 0), named[table.y_label.lower()].ref(0, table.n)
    return None


MAX_REPEATS = 8  # a value repeated more often than this (0/1 dummies) casts no vote


def _best_window(
    index: DataIndex, expected: np.ndarray, exclude: Run | None = None
) -> tuple[Run, int, int] | None:
    """The window of len(expected) values that equals ``expected`` in most positions (values
    compared at 9 significant digits): (run, offset, positions that agree)."""
    n = len(expected)
    where: dict[str, list[int]] = {}
    for i, value in enumerate(expected.tolist()):
        where.setdefault(f"{value:.9g}", []).append(i)
    votes: dict[tuple[int, int], int] = {}
    for number, run in enumerate(index.runs):
        if len(run.values) < n or run is exclude:
            continue
        for position, value in enumerate(run.values.tolist()):
            for i in where.get(f"{value:.9g}", [])[:MAX_REPEATS]:
                offset = position - i
                if 0 <= offset <= len(run.values) - n:
                    votes[(number, offset)] = votes.get((number, offset), 0) + 1
    if not votes:
        return None
    (number, offset), count = max(votes.items(), key=lambda item: item[1])
    return index.runs[number], offset, count


def _from_residual_output(
    workbook: Workbook, table: PastedTable, index: DataIndex
) -> tuple[Ref, Ref, str] | None:
    """The y whose values still give most rows of the pasted residual output (y = predicted +
    residual), and the x that gives most predicted values (one x), or the x the table names."""
    output = table.residual_output
    n = table.n
    if output is None:
        return None
    predicted = np.array(output.predicted)
    best_y = _best_window(index, predicted + np.array(output.residuals))
    if best_y is None or best_y[2] < max(3, (n + 1) // 2):
        return None
    y_run, y_at, y_agree = best_y
    x_ref: Ref | None = None
    x_agree = None
    if table.k == 1 and table.slopes[0] != 0:
        best_x = _best_window(
            index, (predicted - table.coefficients[0]) / table.slopes[0], exclude=y_run
        )
        if best_x is not None and best_x[2] >= max(3, (n + 1) // 2):
            x_ref, x_agree = best_x[0].ref(best_x[1], n), best_x[2]
    if x_ref is None:
        x_ref = _named_beside(workbook, table, index, y_run, y_at)
    if x_ref is None:
        return None
    if y_agree == n and x_agree == n:
        return x_ref, y_run.ref(y_at, n), "every row of the residual output follows these data"
    evidence = (
        f"{y_agree} of the {n} values of {y_run.ref(y_at, n).address} still equal the pasted "
        "predicted value plus residual"
        + (f", and {x_agree} of {x_ref.address} the x the predictions imply" if x_agree else "")
    )
    return x_ref, y_run.ref(y_at, n), evidence


def _named_beside(
    workbook: Workbook, table: PastedTable, index: DataIndex, y_run: Run, y_at: int
) -> Ref | None:
    """The x runs headed by the table's x labels, over the same rows as y."""
    place = y_run.start + y_at
    named = {}
    for run in index.runs:
        if (run.sheet, run.by_rows) != (y_run.sheet, y_run.by_rows):
            continue
        offset = place - run.start
        if offset < 0 or offset + table.n > len(run.values):
            continue
        header = run.header(workbook, offset).lower()
        if header:
            named[header] = (run, offset)
    if not all(label and label.lower() in named for label in table.x_labels):
        return None
    runs = [named[label.lower()][0] for label in table.x_labels]
    if any(b.line != a.line + 1 for a, b in zip(runs, runs[1:], strict=False)):
        return None
    return block_ref(runs, table.n, named[table.x_labels[0].lower()][1])


def _total_and_names(
    workbook: Workbook, table: PastedTable, index: DataIndex, windows: Windows, y_rows: np.ndarray
) -> tuple[Ref, Ref, str] | None:
    """A y that still has the table's total sum of squares, with the x columns the table names
    beside it over the same rows: the x values changed since the table was pasted."""
    if table.ss_total is None or not table.x_labels or not all(table.x_labels):
        return None
    for y in y_rows[:50].tolist():
        y_run, y_at = index.runs[int(windows.run[y])], int(windows.offset[y])
        x_ref = _named_beside(workbook, table, index, y_run, y_at)
        if x_ref is not None:
            y_ref = y_run.ref(y_at, table.n)
            return (
                x_ref,
                y_ref,
                f"{y_ref.address} still has the table's total sum of squares and the columns "
                f"headed {', '.join(table.x_labels)} lie beside it over the same rows",
            )
    return None
