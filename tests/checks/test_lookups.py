"""Look-ups kept for speed give what the plain way gives:

* a reference's frame kept by the reference object (``formula_blocks.placed``): an equal
  reference made anew is placed alike, and distinct references are never mixed up;
* the blocks and sibling groups found once per workbook (``formula_blocks.workbook_blocks``)
  are those ``blocks_of`` and ``sibling_groups`` give;
* ``formula_filter.CellLookup`` finds the cell ``Workbook.cell`` finds, for generated keys
  (sheet names in other cases, missing sheets and cells);
* regression-cell-error, which walks only formulas whose text (or a defined name in it) can
  call a regression function, still reports a LINEST reached through a defined name.
"""

from __future__ import annotations

import random
from dataclasses import replace
from pathlib import Path

from auditor.checks.broken_regressions import regression_cell_error
from auditor.checks.formula_blocks import (
    blocks_of,
    placed,
    resolve,
    sibling_groups,
    workbook_blocks,
)
from auditor.context import WorkbookContext
from auditor.design.formula_filter import CellLookup
from auditor.formula.operands import Corner, Reference
from auditor.formula.r1c1 import references
from auditor.formula.syntax import parse
from auditor.locate.locator import Locator, locate
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, DefinedName, ErrorValue, Sheet, Workbook

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"


def _context(path: Path) -> WorkbookContext:
    workbook = read_workbook(path)
    specs = locate(workbook, None, Locator(workbook))
    results = audit_workbook(path, load_policy("general")).regressions
    return WorkbookContext(True, 0, workbook=workbook, specs=specs, results=results)


def _with_siblings() -> WorkbookContext:
    for path in sorted(FIXTURES.glob("*.xlsx")):
        context = _context(path)
        if sibling_groups(blocks_of(context.specs, context.results)):
            return context
    raise AssertionError("no fixture workbook has sibling blocks")


def test_blocks_found_once_are_those_found_plainly() -> None:
    context = _with_siblings()
    blocks, groups = workbook_blocks(context)
    plain = blocks_of(context.specs, context.results)
    assert [(b.index, b.top, b.title, sorted(b.cells)) for b in blocks] == [
        (b.index, b.top, b.title, sorted(b.cells)) for b in plain
    ]
    assert [[b.index for b in g] for g in groups] == [
        [b.index for b in g] for g in sibling_groups(plain)
    ]
    again = workbook_blocks(context)
    assert again[0] is blocks and again[1] is groups  # found once, then read


def test_a_reference_made_anew_is_placed_as_the_kept_one() -> None:
    context = _with_siblings()
    block = workbook_blocks(context)[1][0][0]
    stat = next(s for s in block.cells.values() if s.cell.formula and ":" in s.cell.formula)
    sheet = stat.cell.sheet
    for ref in references(stat.cell.formula or ""):
        twin = replace(ref, start=replace(ref.start))  # equal, not the same object
        assert twin == ref and twin is not ref
        first, second = placed(ref, block, sheet), placed(twin, block, sheet)
        assert first == second
        assert first[1] == resolve(ref, block, sheet)
    # Two different references on one block keep two entries, each its own.
    a = Reference("", Corner(3, 1), Corner(9, 1))
    b = Reference("", Corner(3, 2), Corner(9, 2))
    assert placed(a, block, sheet)[1] != placed(b, block, sheet)[1]
    assert placed(a, block, sheet)[1] == resolve(a, block, sheet)


def test_cell_lookup_finds_what_workbook_cell_finds() -> None:
    rng = random.Random(3)
    sheets = {}
    for name in ("Data", "Results", "Run 2"):
        cells = {}
        for _ in range(40):
            row, col = rng.randint(1, 12), rng.randint(1, 6)
            cells[(row, col)] = Cell(name, row, col, rng.random())
        sheets[name] = Sheet(name, cells)
    workbook = Workbook("w.xlsx", "", sheets, [], True)
    lookup = CellLookup(workbook)
    names = ["Data", "data", "RESULTS", "Run 2", "run 2", "Missing"]
    for _ in range(2000):
        key = (rng.choice(names), rng.randint(0, 13), rng.randint(0, 7))
        assert lookup(*key) == workbook.cell(*key), key


def test_a_failing_linest_behind_a_defined_name_is_still_reported() -> None:
    data = {(r, c): Cell("Rig", r, c, float(r * c)) for r in range(2, 10) for c in (1, 2)}
    data[(1, 5)] = Cell("Rig", 1, 5, ErrorValue("#VALUE!"), "=INDEX(line_fit,1)")
    data[(2, 5)] = Cell("Rig", 2, 5, ErrorValue("#DIV/0!"), "=E9/0")
    names = [DefinedName("line_fit", "LINEST(Rig!$A$2:$B$9)")]
    workbook = Workbook("rig.xlsx", "", {"Rig": Sheet("Rig", data)}, names, True)
    parsed = {
        (cell.sheet, cell.row, cell.col): parse(cell.formula or "", cell.sheet, workbook)
        for cell in data.values()
        if cell.formula
    }
    context = WorkbookContext(True, len(parsed), workbook=workbook, parsed=parsed)
    found = regression_cell_error.function(context)
    assert [f.cells for f in found] == [["Rig!E1"]]  # the #DIV/0! of a plain quotient is not
    assert "#VALUE!" in found[0].message and "LINEST" in found[0].fix
