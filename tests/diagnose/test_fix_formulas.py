"""Every suggested fix, put into the workbook, gives the intended value.

A fix repairs the cause in a formula (auditor.diagnose.fixes). For every finding of the demo
corpus that suggests formulas, each formula is evaluated on its cell's sheet with the project's
evaluator and compared with the intended value of the statistic the cell reports (1e-9 relative:
the design's agreement for computed values). The optional test writes the formulas into a copy of
each workbook (openpyxl), has LibreOffice recalculate it, and compares LibreOffice's values with
the same intended values: an outside check that the formulas mean in a spreadsheet what they
mean to us. The fixtures are LibreOffice recalculations (fixtures/make_fixtures.py).
"""

from __future__ import annotations

import re
import shutil
import sys
from pathlib import Path

import openpyxl
import pytest

from auditor.checks.merge import fix_formulas
from auditor.evaluation.evaluator import Evaluator
from auditor.grid import parse_cell
from auditor.model import WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2]
WORKBOOKS = sorted((ROOT / "fixtures" / "workbooks").glob("*.xlsx"))
RELATIVE = 1e-9


# A fix that ends in a formula: "Enter the formula again: =SLOPE(…)", "Compute it from the data:
# =T.DIST.2T(…)", "Point it at this block's own data: =…", "…; in Sheet!E12: =…".
TRAILING = re.compile(r"(?:(?:in (?P<cell>[^:;]+!\$?[A-Z]+\$?\d+))?:|use) (?P<formula>=[^;]+?)\.?$")


def _suggested(result: WorkbookResult) -> list[tuple[str, str, float]]:
    """(cell, formula, intended value) for every formula a finding suggests: those recorded
    with stat-recompute's evidence, and those its fix text ends with (pasted results, typed
    counts, copied blocks). Only cells that report a statistic with an intended value count."""
    intended = {
        value.cell: value.intended
        for regression in result.regressions
        for value in regression.reported.values()
        if value.intended is not None
    }
    out = []
    for finding in result.all_findings():
        suggested = list(fix_formulas(finding).items())
        match = TRAILING.search(finding.fix.strip())
        if match is not None and finding.cells:
            suggested.append((match.group("cell") or finding.cells[0], match.group("formula")))
        for cell, formula in suggested:
            if cell in intended:
                out.append((cell, formula, float(intended[cell])))
    return list(dict.fromkeys(out))


def _close(a: float, b: float) -> bool:
    return abs(a - b) <= RELATIVE * max(abs(a), abs(b), 1e-300)


def _all_suggested() -> dict[Path, list[tuple[str, str, float]]]:
    policy = load_policy("general")
    return {path: _suggested(audit_workbook(path, policy)) for path in WORKBOOKS}


SUGGESTED = _all_suggested()


def test_the_corpus_gets_formula_fixes_for_its_wrong_values() -> None:
    count = sum(len(v) for v in SUGGESTED.values())
    assert count >= 30, count  # every kind of wrong value on a plain range gets one
    formulas = [formula for items in SUGGESTED.values() for _, formula, _ in items]
    assert all(f.startswith("=") for f in formulas)
    assert any(f.startswith("=SLOPE(") for f in formulas)
    assert any("T.DIST.2T(" in f for f in formulas)
    assert any(f.startswith("=J6/SQRT(DEVSQ(") for f in formulas)  # a copied block repointed
    assert any("TINV(0.05,E9)" in f for f in formulas)  # a typed count replaced


@pytest.mark.parametrize("path", WORKBOOKS, ids=[p.name for p in WORKBOOKS])
def test_each_suggested_formula_gives_the_intended_value(path: Path) -> None:
    evaluator = Evaluator(read_workbook(path))
    for cell, formula, intended in SUGGESTED[path]:
        sheet = cell.rpartition("!")[0]
        value = evaluator.evaluate(formula, sheet)
        assert isinstance(value, float), (cell, formula, value)
        assert _close(value, intended), (cell, formula, value, intended)


def _stored_prefix(formula: str) -> str:
    """Newer functions are stored with the _xlfn. prefix in a file (design: spreadsheet facts)."""
    for name in ("T.DIST.2T(", "T.INV.2T("):
        formula = re.sub(rf"(?<![._A-Za-z]){re.escape(name)}", "_xlfn." + name, formula)
    return formula


@pytest.mark.optional
def test_libreoffice_agrees_with_every_suggested_formula(tmp_path: Path) -> None:
    soffice = shutil.which("soffice") or shutil.which("libreoffice")
    if soffice is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    placed: dict[str, list[tuple[str, int, int, float, str]]] = {}
    inputs = []
    for path, items in SUGGESTED.items():
        if not items:
            continue
        book = openpyxl.load_workbook(path)
        spots = []
        for cell, formula, intended in items:
            sheet = cell.rpartition("!")[0]
            target = book[sheet]
            row, col = target.max_row + 2 + len(spots), 1
            target.cell(row=row, column=col).value = _stored_prefix(formula)
            spots.append((sheet, row, col, intended, formula))
        copy = tmp_path / "in" / path.name
        copy.parent.mkdir(exist_ok=True)
        book.save(copy)
        inputs.append(copy)
        placed[path.name] = spots
    sys.path.insert(0, str(ROOT / "fixtures"))
    from make_fixtures import recalculate  # the fixtures' own LibreOffice call and profile

    out = tmp_path / "out"
    out.mkdir()
    recalculate(inputs, out, tmp_path)
    for name, spots in placed.items():
        recalculated = read_workbook(out / name)
        for sheet, row, col, intended, formula in spots:
            cell = recalculated.cell(sheet, row, col)
            value = cell.value if cell is not None else None
            assert isinstance(value, (int, float)) and not isinstance(value, bool), (name, formula)
            assert _close(float(value), intended), (name, formula, value, intended)


def test_parse_cell_reads_the_cells_fixes_name() -> None:
    assert parse_cell("E12") == (12, 5)
