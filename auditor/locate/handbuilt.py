"""Hand-built slopes and intercepts, recognised by what they compute, not by how they are spelt.

A formula cell is a **slope** when, followed through the single cells it references (and the
cells of a filled column it averages), it reads two ranges of the same length and shape, and its
value — stored, or evaluated when the file holds none — is the least-squares slope of one range
on the other, or would be but for a mistake people make when building it by hand:

* ``least-squares``: COVARIANCE.S/VAR.S, COVAR/VARP, CORREL·STDEV(y)/STDEV(x), SUMPRODUCT sums
  of centred products, ``(n·Σxy − Σx·Σy)/(n·Σx² − (Σx)²)``, any wrapper (IFERROR, ROUND of no
  digits lost), all give the same number;
* ``population-sample-mix``: a population covariance over a sample variance (or the reverse)
  gives the slope times (n − 1)/n (or n/(n − 1));
* ``rows-differ``: the covariance pairs only the rows where both cells are numbers, but the
  variance keeps every number of its one range, so text such as "n/a" on the y side drops a row
  from the numerator only.

A cell is an **intercept** when its value is ȳ − b·x̄ for such a pair, with b the fitted slope
or the value of a cell the formula reads (a hand-built slope, or another block's slope: the
diagnosis says which).

Nothing here lists spellings: the test is the number. A match is judged at 1e-9 relative (a
stored value carries 15 significant digits), so a coincidence would need ten matching digits.
Correlations, lagged autocorrelations, models from typed constants and ratio columns compute
other numbers and are left alone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import permutations
from typing import Any

from auditor.evaluation.evaluator import Evaluator, Unsupported
from auditor.extract.fallback import StoredFallback
from auditor.formula.syntax import Node, Ref, RefNode, Unary, calls, references
from auditor.locate.handbuilt_reach import Key, Reach
from auditor.locate.handbuilt_sums import (
    MIN_PAIRS,
    Moments,
    Numbers,
    is_number,
    moments_between,
    moments_swapped,
    numbers_of,
    same_number,
)
from auditor.locate.spec import overlaps
from auditor.read.workbook import Cell, Workbook

MAX_DEPTH = 3  # M2 = K2/J2, K2 = COVARIANCE.P(…): two levels; three is generous
_UNKNOWN = object()  # not looked for yet (None: looked for, and no sums)
MAX_VECTORS = 8  # ranges one formula reads, at most: beyond that it is a table, not a slope
# Cells calling these are regressions the formula recogniser finds already.
REGRESSION_FUNCTIONS = frozenset(
    {"SLOPE", "INTERCEPT", "LINEST", "LOGEST", "TREND", "FORECAST", "FORECAST.LINEAR", "STEYX"}
)


def _is_vector(ref: Ref) -> bool:
    """One column (whole columns too: B:B reads the sheet's used rows) or one row."""
    return (
        ref.external is None
        and not ref.whole_row
        and (ref.rows == 1 or ref.cols == 1)
        and max(ref.rows, ref.cols) >= MIN_PAIRS
    )


@dataclass(frozen=True)
class Recognised:
    """One cell found to compute a slope or an intercept of y on x."""

    cell: Cell
    role: str  # "slope" or "intercept"
    y: Ref
    x: Ref
    reading: str  # least-squares, population-sample-mix, rows-differ, slope-cell
    value: float
    evidence: dict[str, Any]


class HandbuiltFinder:
    """Tests every formula cell that reads two equal ranges against the slope and intercept of
    one on the other. Range values and sums are computed once per range and per pair."""

    def __init__(self, workbook: Workbook, evaluator: Evaluator, parsed: dict[Key, Node]):
        self.workbook = workbook
        self.evaluator = evaluator
        self.parsed = parsed
        self.reader = StoredFallback(evaluator, workbook)
        self._reach: dict[Key, Reach] = {}
        self._refs: dict[Key, list[Ref]] = {}
        self._values: dict[Ref, list[object] | None] = {}
        self._numbers: dict[Ref, Numbers | None] = {}
        self._moments: dict[tuple[Ref, Ref], Moments | None] = {}
        self._pairs: dict[tuple[Ref, ...], list[tuple[Ref, Ref]]] = {}
        self._names: dict[str, str | None] = {}  # a sheet as spelt -> the workbook's spelling

    # -- what a formula reads ---------------------------------------------------------------
    def refs(self, key: Key) -> list[Ref]:
        """The references of a formula cell, found once (long formulas cost a walk each)."""
        found = self._refs.get(key)
        if found is None:
            node = self.parsed.get(key)
            found = [] if node is None else [r for r in references(node) if r.external is None]
            self._refs[key] = found
        return found

    def reach(self, key: Key, depth: int = 0) -> Reach:
        found = self._reach.get(key)
        if found is not None:
            return found
        out = Reach()
        self._reach[key] = out  # a cycle meets an empty reach, not a loop
        if key not in self.parsed or depth > MAX_DEPTH:
            return out
        for ref in self.refs(key):
            if ref.is_cell:
                target = self._key(ref.sheet, ref.r1, ref.c1)
                if target is not None and target in self.parsed:
                    out.add_cell(target)
                    out.add(self.reach(target, depth + 1))
            elif _is_vector(ref):
                out.add_vector(ref)
                self._lift(ref, out, depth)
        return out

    def _lift(self, ref: Ref, out: Reach, depth: int) -> None:
        """A filled column of formulas (``=D4-B4*$F$4`` down E4:E14) reads, row by row, the
        ranges its first and last cells span: D4:D14, B4:B14, and the fixed cell F4."""
        first = self._key(ref.sheet, ref.r1, ref.c1)
        last = self._key(ref.sheet, ref.r2, ref.c2)
        if first is None or last is None or first not in self.parsed or last not in self.parsed:
            return
        head, tail = self.refs(first), self.refs(last)
        if len(head) != len(tail):
            return
        span = (ref.r2 - ref.r1, ref.c2 - ref.c1)
        for a, b in zip(head, tail, strict=True):
            if not (a.is_cell and b.is_cell) or a.sheet != b.sheet:
                continue
            if a == b:
                target = self._key(a.sheet, a.r1, a.c1)
                if target is not None and target in self.parsed:
                    out.add_cell(target)
                    out.read_by.setdefault(target, ref)
                    out.add(self.reach(target, depth + 1))
            elif (b.r1 - a.r1, b.c1 - a.c1) == span:
                out.add_vector(Ref(a.sheet, a.r1, a.c1, b.r1, b.c1))

    def _key(self, sheet: str, row: int, col: int) -> Key | None:
        names = self._names
        if sheet not in names:
            found = self.workbook.sheet(sheet)
            names[sheet] = found.name if found is not None else None
        name = names[sheet]
        return (name, row, col) if name is not None else None

    # -- values -----------------------------------------------------------------------------
    def values(self, ref: Ref) -> list[object] | None:
        """A range's values; a cell the evaluator cannot compute (LET, STOCKHISTORY) reads as
        the value the file stored, as the intended table reads it (auditor.extract.fallback)."""
        if ref not in self._values:
            try:
                block = self.reader.range_values(ref)
                self._values[ref] = block.reshape(-1).tolist()  # the cells' own objects
            except Unsupported:
                self._values[ref] = None
        return self._values[ref]

    def numbers(self, ref: Ref) -> Numbers | None:
        """A range's numbers, found once however many pairs it is in."""
        if ref not in self._numbers:
            values = self.values(ref)
            self._numbers[ref] = None if values is None else numbers_of(values)
        return self._numbers[ref]

    def moments(self, y: Ref, x: Ref) -> Moments | None:
        """The pair's sums, found once; y on x from x on y when that is known (the same sums)."""
        found = self._moments.get((y, x), _UNKNOWN)
        if found is not _UNKNOWN:
            return found  # type: ignore[return-value]
        y_numbers, x_numbers = self.numbers(y), self.numbers(x)
        if y_numbers is None or x_numbers is None or len(y_numbers) != len(x_numbers):
            made = None
        elif (reverse := self._moments.get((x, y))) is not None:
            made = moments_swapped(reverse, x_numbers, y_numbers)
        else:
            made = moments_between(y_numbers, x_numbers)
        self._moments[(y, x)] = made
        return made

    def cell_numbers(self, cell: Cell) -> list[float]:
        """The value the author saw (stored), then the one the formula gives now."""
        out = []
        if self.workbook.stored_values and is_number(cell.value):
            out.append(float(cell.value))  # type: ignore[arg-type]
        try:
            evaluated = self.evaluator.cell_value(cell.sheet, cell.row, cell.col)
        except Unsupported:
            evaluated = None
        if is_number(evaluated) and float(evaluated) not in out:  # type: ignore[arg-type]
            out.append(float(evaluated))  # type: ignore[arg-type]
        return [v for v in out if v != 0 and math.isfinite(v)]

    # -- the test ---------------------------------------------------------------------------
    def candidate_pairs(self, reach: Reach) -> list[tuple[Ref, Ref]]:
        """The ordered pairs of equal shape among the first vectors, neither computed from the
        other; found once per list of vectors (a column of formulas reads the same ones: the
        answer depends on the vectors only, what the formulas read being fixed)."""
        vectors = tuple(reach.vectors[:MAX_VECTORS])
        found = self._pairs.get(vectors)
        if found is None:
            found = self._pairs[vectors] = [
                (y, x)
                for y, x in permutations(vectors, 2)
                if (y.rows, y.cols) == (x.rows, x.cols)
                and not overlaps(y, x)
                and not self.derived(y, x)
            ]
        return list(found)

    def derived(self, y: Ref, x: Ref) -> bool:
        """y computed from x (fitted values, residuals, offsets y − b·x), or x from y: such a
        column regressed on the other gives R² or the intercept again, by algebra."""
        return self._reads(y, x) or self._reads(x, y)

    def _reads(self, column: Ref, other: Ref) -> bool:
        first = self._key(column.sheet, column.r1, column.c1)
        if first is None or first not in self.parsed:
            return False
        direct = self.refs(first)
        reached = self.reach(first).vectors
        return any(overlaps(r, other) for r in [*direct, *reached])

    def row_formula(self, key: Key, reach: Reach) -> bool:
        """A formula reading one cell of the data (a fitted value ``=$B$1+$B$2*A7``, a residual)
        works row by row: it is not a summary of the columns."""
        return any(
            ref.is_cell and any(overlaps(ref, vector) for vector in reach.vectors)
            for ref in self.refs(key)
        )

    def skipped(self, node: Node) -> bool:
        """A plain link (=+Weekly!D4) or a cell the formula recogniser owns."""
        while isinstance(node, Unary):
            node = node.operand
        if isinstance(node, RefNode):
            return True
        return any(c.name in REGRESSION_FUNCTIONS for c in calls(node))

    def recognise(self, key: Key) -> Recognised | None:
        cell = self.workbook.cell(*key)
        if cell is None:
            return None
        reach = self.reach(key)
        pairs = self.candidate_pairs(reach) if len(reach.vectors) >= 2 else []
        if not pairs or self.skipped(self.parsed[key]) or self.row_formula(key, reach):
            return None
        numbers = self.cell_numbers(cell)
        if not numbers:
            return None
        slope_cells = self._slope_cells(reach)
        for value in numbers:
            for y, x in pairs:
                moments = self.moments(y, x)
                if moments is None:
                    continue
                for reading, number, evidence in moments.slope_readings():
                    if same_number(value, number):
                        return Recognised(cell, "slope", y, x, reading, value, evidence)
                for reading, number, evidence in moments.intercept_readings(slope_cells):
                    if same_number(value, number):
                        return Recognised(cell, "intercept", y, x, reading, value, evidence)
        return None

    def _slope_cells(self, reach: Reach) -> list[tuple[str, float, str | None]]:
        out = []
        for key in reach.cells:
            cell = self.workbook.cell(*key)
            if cell is None:
                continue
            through = reach.read_by.get(key)
            for number in self.cell_numbers(cell)[:1]:
                out.append((cell.address, number, through.address if through else None))
        return out

    def find(self) -> list[Recognised]:
        found = []
        for key in self.parsed:
            recognised = self.recognise(key)
            if recognised is not None:
                found.append(recognised)
        return found
