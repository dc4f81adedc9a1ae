"""Proof over whole folders that the locator's parses are the parses of the cells' own texts.

    python benchmarks/same_parses.py FOLDER [FOLDER ...]

Every .xlsx/.xlsm below each folder is read in place (never copied, never written) twice. The
first reading is parsed as the locator parses it (:class:`auditor.locate.cell_parses.CellParses`:
a shared formula's anchor parsed once and moved to each cell of its group, formulas spelt out
cell by cell moved from the first of their shape); in the second, every formula text is parsed
anew, with no cache. Each cell's two trees must be equal node for node, with the same references
in the same order, or both fail. A third reading is only timed: each text through ``parse`` and
its caches, as the locator parsed before trees were moved. Prints the counts and the time of
each way; exits 1 on any difference.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

from auditor.errors import FormulaError, UnreadableWorkbook
from auditor.formula import templates
from auditor.formula.nodes import ArrayNode, Node, children, moved_from, references, walk
from auditor.formula.parser import _Context, _parse_now
from auditor.formula.syntax import parse
from auditor.formula.tokens import _tokenized
from auditor.locate.cell_parses import CellParses
from auditor.locate.formulas import shared_tokens
from auditor.read.open import read_workbook
from auditor.read.workbook import Workbook

_PARTS = ("args", "left", "right", "operand", "rows")


def _shape(node: Node) -> list[tuple[str, str, int]]:
    """The tree node by node, parents first, each with its own fields (iterative: a chain of
    a thousand additions nests too deep for ==)."""
    out = []
    for each in walk(node):
        own = {k: v for k, v in vars(each).items() if k not in _PARTS and not k.startswith("_")}
        if isinstance(each, ArrayNode):
            own = {"shape": [len(row) for row in each.rows]}
        out.append((type(each).__name__, repr(own), len(children(each))))
    return out


def _as_locator(workbook: Workbook) -> dict[tuple[str, int, int], Node | str]:
    parses = CellParses(workbook)
    out: dict[tuple[str, int, int], Node | str] = {}
    for cell in workbook.formula_cells():
        try:
            out[(cell.sheet, cell.row, cell.col)] = parses.parse(cell, cell.formula or "")
        except FormulaError as exc:
            out[(cell.sheet, cell.row, cell.col)] = str(exc)
    return out


def _anew(workbook: Workbook) -> dict[tuple[str, int, int], Node | str]:
    out: dict[tuple[str, int, int], Node | str] = {}
    for cell in workbook.formula_cells():
        try:
            node = _parse_now(_Context(cell.formula or "", cell.sheet, workbook))
            out[(cell.sheet, cell.row, cell.col)] = node
        except FormulaError as exc:
            out[(cell.sheet, cell.row, cell.col)] = str(exc)
    return out


def _cached(workbook: Workbook) -> None:
    """Each text through ``parse`` and its caches, a shared formula's cell from the tokens its
    group gives: the locator's way before trees were moved (timed only)."""
    for cell in workbook.formula_cells():
        text = cell.formula or ""
        try:
            parse(text, cell.sheet, workbook, shared_tokens(workbook, cell, text))
        except FormulaError:
            pass


def main(folders: list[str]) -> int:
    files = cells = moved = differ = 0
    spent = {"locator": 0.0, "anew": 0.0, "cached": 0.0}
    for folder in folders:
        for path in sorted(Path(folder).rglob("*.xls[xm]")):
            try:
                mine, fresh = read_workbook(path), read_workbook(path)
            except UnreadableWorkbook:
                continue
            files += 1
            templates.clear()  # each way starts with no parse nor tokens kept
            _tokenized.cache_clear()
            started = time.process_time()
            got = _as_locator(mine)
            spent["locator"] += time.process_time() - started
            _tokenized.cache_clear()
            started = time.process_time()
            want = _anew(fresh)
            spent["anew"] += time.process_time() - started
            templates.clear()
            _tokenized.cache_clear()
            again = read_workbook(path)
            started = time.process_time()
            _cached(again)
            spent["cached"] += time.process_time() - started
            for key, node in got.items():
                cells += 1
                other = want[key]
                if isinstance(node, str) or isinstance(other, str):
                    same = node == other
                else:
                    moved += moved_from(node) is not None
                    same = _shape(node) == _shape(other) and references(node) == references(other)
                if not same:
                    differ += 1
                    print(f"differs: {path.name} {key}", file=sys.stderr)
    print(
        f"{files} workbooks, {cells} formula cells, {moved} moved from an anchor, {differ} differ"
    )
    print(
        f"CPU s: locator's parses {spent['locator']:.3f}, each text through parse() and its "
        f"caches {spent['cached']:.3f}, every text anew {spent['anew']:.3f}"
    )
    return 1 if differ else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
