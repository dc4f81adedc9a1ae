"""The data of a typed statistic table: by reproduction, else by one changed reading, else by
words and place.

Candidates are pairs of numeric runs of one sheet in the same orientation (two columns over the
same rows, or two rows over the same columns) a few lines apart, outside every typed table.
In order:

1. **reproduced** — a window of n pairs (n = df + 2 when the table allows it) whose fit gives
   every typed figure at the digits shown;
2. **one reading** — the pair whose fit gives every typed figure once one y value is changed
   (:func:`~auditor.locate.typed_fit.single_reading`): the table is stale and the row says why;
3. **words and place** — the pair whose headers (and sheet name) share the words of the table's
   title and labels ("Slope (NTU per L/s)" and "Flow (L/s)", "Turbidity (NTU)"; a title
   "Site 3 — turbidity vs flow" and a sheet "Site 3"), else the pair right beside the table.

The link's strength decides what may be said: one changed reading, or words that match with the
pair right beside the table, are evidence a reviewer accepts; place alone is not.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace

import numpy as np

from auditor.compare.precision import decimals_shown
from auditor.formula.syntax import Ref
from auditor.locate.pasted_data import DataIndex, Run
from auditor.locate.typed_fit import Refit, agrees, single_reading, window_stats
from auditor.locate.typed_record import TypedTable
from auditor.read.workbook import Workbook

MAX_APART = 4  # lines between x and y of one data table
MAX_TRIED = 400  # candidate pairs fitted per table, best words and nearest first
BESIDE = 2  # empty lines between a table and data that still make one block
_FUNCTION_WORDS = {"the", "and", "for", "per", "with", "from", "des", "der", "die", "del", "los"}


@dataclass
class Candidate:
    x: Run
    y: Run
    start: int  # first row (or column) of the window
    n: int
    words: set[str] = field(default_factory=set)
    gap: float = float("inf")  # empty lines between the table and the pair (same sheet)
    x_words: set[str] = field(default_factory=set)  # the header words of each line
    y_words: set[str] = field(default_factory=set)

    def values(self) -> tuple[np.ndarray, np.ndarray]:
        return (
            self.x.values[self.start - self.x.start : self.start - self.x.start + self.n],
            self.y.values[self.start - self.y.start : self.start - self.y.start + self.n],
        )

    def refs(self) -> tuple[Ref, Ref]:
        return (
            self.x.ref(self.start - self.x.start, self.n),
            self.y.ref(self.start - self.y.start, self.n),
        )

    def swapped(self) -> Candidate:
        return Candidate(
            self.y, self.x, self.start, self.n, self.words, self.gap, self.y_words, self.x_words
        )


@dataclass
class TypedSource:
    status: str  # "reproduced" | "stale" | "none"
    x: Ref | None = None
    y: Ref | None = None
    evidence: str = ""
    words: list[str] = field(default_factory=list)
    beside: bool = False
    refit: Refit | None = None
    strong: bool = False  # evidence enough for a major finding
    link: str = ""  # what ties the table to these data, in words: "words alone", …

    @property
    def tie(self) -> str:
        """The weak link in a sentence: "nothing but its place ties …"."""
        return "shared words" if self.link == "words alone" else "its place"


def tokens(text: str) -> set[str]:
    """Words a reader would match: 'Turbidity (NTU)' -> {'turbidity', 'ntu'}."""
    out = set()
    for word in re.findall(r"[\w/µ°²³%]+", text.lower()):
        if word in _FUNCTION_WORDS:
            continue
        if len(word) > 2 or any(not ch.isalpha() for ch in word):
            out.add(word)
    return out


def candidates(
    workbook: Workbook, index: DataIndex, blocked: set[tuple[str, int, int]]
) -> list[Candidate]:
    """Pairs of runs of one sheet over the same rows (or columns), outside every typed table
    and every statistic cell bound to a regression (a LINEST block's columns are no data)."""
    runs = [r for r in index.runs if not _blocked(r, blocked)]
    by_place: dict[tuple[str, bool], list[Run]] = {}
    for run in runs:
        by_place.setdefault((run.sheet, run.by_rows), []).append(run)
    found = []
    for group in by_place.values():
        group.sort(key=lambda r: r.line)
        for i, first in enumerate(group):
            for second in group[i + 1 :]:
                if second.line - first.line > MAX_APART:
                    break
                start = max(first.start, second.start)
                end = min(first.start + len(first.values), second.start + len(second.values))
                if end - start >= 3:
                    pair = Candidate(first, second, start, end - start)
                    pair.x_words, pair.y_words = (
                        _words_of(workbook, first),
                        _words_of(workbook, second),
                    )
                    pair.words = tokens(first.sheet) | pair.x_words | pair.y_words
                    found.append(pair)
    return found


def _blocked(run: Run, blocked: set[tuple[str, int, int]]) -> bool:
    for position in range(run.start, run.start + len(run.values)):
        row, col = (run.line, position) if run.by_rows else (position, run.line)
        if (run.sheet, row, col) in blocked:
            return True
    return False


def _words_of(workbook: Workbook, run: Run) -> set[str]:
    """The words of the header before a run (above a column, left of a row), two cells deep."""
    words: set[str] = set()
    for back in (0, 1):
        first = run.start - 1 - back
        cell = (
            workbook.cell(run.sheet, run.line, first)
            if run.by_rows
            else workbook.cell(run.sheet, first, run.line)
        )
        if cell is not None and isinstance(cell.value, str):
            words |= tokens(cell.value)
    return words


def _gap(table: TypedTable, pair: Candidate) -> float:
    if pair.x.sheet != table.sheet:
        return float("inf")
    rows = [r for r, _ in table.footprint]
    cols = [c for _, c in table.footprint]
    x_ref, y_ref = pair.refs()
    top, bottom = min(x_ref.r1, y_ref.r1) - 1, max(x_ref.r2, y_ref.r2)  # with the header
    left, right = min(x_ref.c1, y_ref.c1) - 1, max(x_ref.c2, y_ref.c2)
    dy = max(0, top - max(rows) - 1, min(rows) - bottom - 1)
    dx = max(0, left - max(cols) - 1, min(cols) - right - 1)
    return float(max(dx, dy))


def find_typed_source(table: TypedTable, found: list[Candidate]) -> TypedSource:
    """The data of ``table`` among the ``found`` candidates of its workbook, and how they were
    found (see the module docstring)."""
    pairs = [replace(pair, gap=_gap(table, pair)) for pair in found]
    own = tokens(table.words())
    shared = set.intersection(*(p.words for p in pairs)) if len(pairs) > 1 else set()
    # words no other pair has first, then all shared words ("turbidity" over a date column)
    ranked = sorted(
        pairs, key=lambda p: (-len((p.words & own) - shared), -len(p.words & own), *_place(p))
    )
    sizes = {d + 2 for d in table.df_options}
    ranked = ranked[:MAX_TRIED]
    for pair in ranked:
        for oriented in _orientations(pair, table):
            hit = _reproducing_window(table, oriented, sizes)
            if hit is not None:
                x_ref, y_ref = hit.refs()
                return TypedSource("reproduced", x_ref, y_ref, "its fit gives every typed figure")
    for pair in ranked:
        if sizes and pair.n not in sizes:
            continue
        for oriented in _orientations(pair, table):
            x_values, y_values = oriented.values()
            readings = single_reading(table, x_values, y_values)
            # one reading, or one of the replicates at one x level (they move the line alike)
            if len({float(x_values[r.index]) for r in readings}) == 1:
                replicates = [r.index for r in readings[1:]]
                return _stale(table, oriented, own, shared, readings[0], replicates)
    nearest = min(pairs, key=_place) if pairs else None
    for pair in ranked:
        matched = (pair.words & own) - shared
        # by place alone only the pair right beside it, of as many rows as the figures say
        beside = pair is nearest and pair.gap <= BESIDE and (not sizes or pair.n in sizes)
        if matched or beside:
            oriented = _orientations(pair, table)[0]
            return _stale(table, oriented, own, shared, None)
    sheets = len({p.x.sheet for p in pairs})
    return TypedSource(
        "none",
        evidence=f"searched {len(pairs)} pairs of numeric columns or rows on {sheets} sheet(s): "
        "none gives the figures (with or without one changed reading), none lies beside the "
        "table with as many rows, and no headers share its words",
    )


def _place(pair: Candidate) -> tuple[float, int, bool]:
    """Nearest first: fewest empty lines to the table, then lines side by side, then columns."""
    return pair.gap, pair.y.line - pair.x.line, pair.x.by_rows


def _orientations(pair: Candidate, table: TypedTable) -> list[Candidate]:
    """x first as the words say (the unit after "per", the name after "vs"), else the left
    (upper) line first."""
    x_words: set[str] = set()
    y_words: set[str] = set()
    for phrase in table.phrases():
        for part in re.split(r"[—–:;,]", phrase.lower()):
            joint = re.search(r"\s(?:per|vs\.?|versus|against|on)\s", part)
            if joint is not None:
                y_words |= tokens(part[: joint.start()])
                x_words |= tokens(part[joint.end() :])
    first, second = pair.x_words, pair.y_words
    swap = len(first & y_words) + len(second & x_words) > len(first & x_words) + len(
        second & y_words
    )
    return [pair.swapped(), pair] if swap else [pair, pair.swapped()]


def _reproducing_window(table: TypedTable, pair: Candidate, sizes: set[int]) -> Candidate | None:
    x, y = pair.values()
    for n in sorted(sizes) if sizes else [pair.n]:
        if n < 3 or n > pair.n:
            continue
        ok = np.nonzero(agrees(table, window_stats(x, y, n), n))[0]
        if len(ok):
            found = Candidate(pair.x, pair.y, pair.start + int(ok[0]), n, pair.words, pair.gap)
            found.x_words, found.y_words = pair.x_words, pair.y_words
            return found
    return None


def _stale(
    table: TypedTable,
    pair: Candidate,
    own: set[str],
    shared: set[str],
    refit: Refit | None,
    replicates: list[int] | None = None,
) -> TypedSource:
    x_ref, y_ref = pair.refs()
    matched = sorted((pair.words & own) - shared)
    beside = pair.gap <= BESIDE
    reasons = []
    if refit is not None:
        first = pair.start - pair.y.start
        cell = pair.y.ref(first + refit.index, 1).address
        also = [pair.y.ref(first + i, 1).address.rpartition("!")[2] for i in replicates or []]
        either = f" (or its replicate {', '.join(also)} at the same x)" if also else ""
        reasons.append(
            f"{x_ref.address} and {y_ref.address} give every typed figure with the reading in "
            f"{cell}{either} at about {_as_recorded(refit.then, pair.values()[1])}, where it "
            f"now holds {refit.now:.6g} (one reading changed since the figures were typed)"
        )
    if matched:
        reasons.append(
            "the data's headers and sheet share the table's words (" + ", ".join(matched) + ")"
        )
    if beside:
        reasons.append(f"the data lie right beside the table ({x_ref.address}, {y_ref.address})")
    strong = refit is not None or (bool(matched) and beside)
    link = "one changed reading" if refit is not None else (
        "words and place" if strong else "words alone" if matched else "place alone"
    )  # fmt: skip
    return TypedSource(
        "stale", x_ref, y_ref, "; ".join(reasons), matched, beside, refit, strong, link
    )


def _as_recorded(value: float, readings: np.ndarray) -> str:
    """A solved reading written to the decimals its neighbours were recorded with."""
    decimals = max((decimals_shown(float(v), "General") for v in readings), default=6)
    return f"{round(value, min(max(decimals, 0), 6)):.{min(max(decimals, 0), 6)}f}"
