"""A reference's frame kept on its block (``formula_blocks.placed``) and both frame forms made
at once (``frame_forms``) give what the plain computation gives, for every formula of every
sibling block in the fixture workbooks and in the generated layouts (fixtures/layouts)."""

from __future__ import annotations

from pathlib import Path

import pytest

from auditor.checks.formula_blocks import (
    Block,
    blocks_of,
    frame_form,
    frame_forms,
    placed,
    resolve,
    sibling_groups,
)
from auditor.errors import FormulaError
from auditor.formula.operands import Reference
from auditor.formula.r1c1 import references
from auditor.locate.locator import Locator, locate
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2] / "fixtures"
BOOKS = (
    sorted((ROOT / "workbooks").glob("*.xlsx"))
    + sorted((ROOT / "layouts" / "workbooks").glob("*.xlsx"))[::6]
)


def _plain_frame(ref: Reference, block: Block, cell_sheet: str) -> str:
    """Which frame a reference is read in, worked out afresh (module doc of formula_blocks)."""
    target = resolve(ref, block, cell_sheet)
    if target is None:
        return "other"
    if block.owns_data(target.sheet, target.r1, target.c1, target.r2, target.c2):
        return "data"
    return "block" if target.sheet.lower() == block.sheet.lower() else "other"


def _fresh(block: Block) -> Block:
    """The same block with nothing remembered."""
    return Block(block.index, block.spec, block.result, block.sheet, block.top, block.cells)


def _groups(path: Path) -> list[list[Block]]:
    workbook = read_workbook(path)
    specs = locate(workbook, None, Locator(workbook))
    results = audit_workbook(path, load_policy("general")).regressions
    assert [s.id for s in specs] == [r.id for r in results]
    return sibling_groups(blocks_of(specs, results))


@pytest.mark.parametrize("path", BOOKS, ids=[p.name for p in BOOKS])
def test_frames_kept_on_the_block_are_the_frames_worked_out_afresh(path: Path) -> None:
    for group in _groups(path):
        for block in group:
            for stat in block.cells.values():
                formula, sheet = stat.cell.formula, stat.cell.sheet
                if not formula:
                    continue
                fine, coarse = frame_forms(formula, block, sheet)
                assert fine == frame_form(formula, _fresh(block), sheet)
                assert coarse == frame_form(formula, _fresh(block), sheet, coarse=True)
                for ref in references(formula):
                    assert placed(ref, block, sheet) == (
                        _plain_frame(ref, block, sheet),
                        resolve(ref, block, sheet),
                    )


def test_the_corpus_has_sibling_blocks_in_every_frame() -> None:
    """The comparison above is not empty: data, block and other frames all occur."""
    frames: set[str] = set()
    for path in BOOKS:
        for group in _groups(path):
            for block in group:
                for stat in block.cells.values():
                    if stat.cell.formula:
                        frames |= {
                            _plain_frame(ref, block, stat.cell.sheet)
                            for ref in references(stat.cell.formula)
                        }
    assert frames == {"data", "block", "other"}


def test_a_formula_holding_the_mark_is_framed_the_plain_way() -> None:
    """frame_forms marks each reference's place with NUL; a formula that holds one itself (no
    file can, a caller might) gets the plain forms, not a misread template."""
    block = next(group[0] for path in BOOKS for group in _groups(path))
    stat = next(s for s in block.cells.values() if s.cell.formula)
    formula, sheet = f'={(stat.cell.formula or "").lstrip("=")}&"\x00"', stat.cell.sheet
    assert frame_forms(formula, block, sheet) == [
        frame_form(formula, _fresh(block), sheet),
        frame_form(formula, _fresh(block), sheet, coarse=True),
    ]


def test_references_without_names_are_the_expanded_ones() -> None:
    """A workbook without defined names: the references kept per formula text (what a sibling
    member reads then) are those an expansion that finds no name gives."""
    for path in BOOKS:
        for cell in read_workbook(path).formula_cells():
            formula = cell.formula or ""
            try:
                plain = references(formula)
            except FormulaError:
                continue
            assert plain == references(formula, lambda _operand: None), formula
