"""The formula audit (auditor/checks/formula_*.py) against outside truth.

* The corrected formula each finding proposes, evaluated in its cell, gives statsmodels' value of
  that statistic over the intended data table (source: statsmodels OLS).
* Rewriting one sibling block's formulas for another block reproduces the formulas the other
  block really holds, as LibreOffice saved them (source: the recalculated fixture files).
* Counts typed into the formulas LibreOffice saved are read as the manifest declares them.
"""

from __future__ import annotations

import functools
import json
import re
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm

from auditor.checks.block_moves import translate
from auditor.checks.formula_audit import typed_counts
from auditor.checks.formula_blocks import blocks_of, frame_form, sibling_groups
from auditor.checks.formula_support import replace_argument
from auditor.context import WorkbookContext
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.syntax import parse
from auditor.locate.locator import Locator, locate
from auditor.model import RegressionResult, WorkbookResult, stat_base
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Workbook

ROOT = Path(__file__).resolve().parents[2]
WORKBOOKS = ROOT / "fixtures" / "workbooks"
MANIFEST = json.loads((ROOT / "fixtures" / "manifest.json").read_text(encoding="utf-8"))
FORMULA_CHECKS = (
    "typed-count-in-formula",
    "pasted-result",
    "sibling-formula-differs",
    "range-beyond-table",
    "other-workbook-ref",
    "ranges-disagree",
    "xy-rows-misaligned",
)
PROPOSED = re.compile(r"(?:: |use )(=.+?)\.?$")


@functools.cache
def _audited(name: str) -> tuple[Workbook, WorkbookResult]:
    return read_workbook(WORKBOOKS / name), audit_workbook(WORKBOOKS / name, load_policy("general"))


def _statsmodels(result: RegressionResult) -> dict[str, float]:
    """The statistics of the intended table, from statsmodels (one x column, with intercept)."""
    used = [p for p in result.data if p.used]
    x = np.array([p.x[0] for p in used], dtype=float)
    y = np.array([p.y for p in used], dtype=float)
    fit = sm.OLS(y, sm.add_constant(x)).fit()
    low, high = fit.conf_int(0.05)[1]
    return {
        "slope": fit.params[1],
        "intercept": fit.params[0],
        "se_slope": fit.bse[1],
        "se_intercept": fit.bse[0],
        "t_slope": fit.tvalues[1],
        "p_slope": fit.pvalues[1],
        "df": fit.df_resid,
        "n": fit.nobs,
        "residual_sd": float(np.sqrt(fit.scale)),
        "r_squared": fit.rsquared,
        "ci_slope_low": low,
        "ci_slope_high": high,
    }


def _proposals() -> list[tuple[str, str, str]]:
    """(workbook, cell, formula) for every finding of the formula audit that writes a formula."""
    out = []
    for entry in MANIFEST["workbooks"]:
        if not entry["stored_values"]:
            continue
        _, result = _audited(entry["file"])
        for finding in result.all_findings():
            if finding.check not in FORMULA_CHECKS or not finding.cells:
                continue
            match = PROPOSED.search(finding.fix)
            if match:
                out.append((entry["file"], finding.cells[0], match.group(1)))
    return out


def _owner(result: WorkbookResult, cell: str) -> tuple[RegressionResult, str]:
    for regression in result.regressions:
        for key, value in regression.reported.items():
            if value.cell == cell:
                return regression, stat_base(key)
    raise AssertionError(f"{cell} is no reported cell")


def test_the_corpus_has_proposals_of_each_formula_check() -> None:
    checks = {
        f.check
        for entry in MANIFEST["workbooks"]
        for f in _audited(entry["file"])[1].all_findings()
        if PROPOSED.search(f.fix)
    }
    assert {"typed-count-in-formula", "pasted-result", "sibling-formula-differs"} <= checks


@pytest.mark.parametrize(("file", "cell", "formula"), _proposals())
def test_a_proposed_formula_computes_the_intended_value(file: str, cell: str, formula: str) -> None:
    workbook, result = _audited(file)
    regression, key = _owner(result, cell)
    value = Evaluator(workbook).evaluate(formula, cell.rpartition("!")[0])
    truth = _statsmodels(regression)[key]
    assert isinstance(value, float | int), (formula, value)
    assert float(value) == pytest.approx(truth, rel=1e-9, abs=1e-15), (formula, key)


def _context(name: str) -> WorkbookContext:
    workbook, result = _audited(name)
    locator = Locator(workbook)
    specs = locate(workbook, None, locator)
    assert [s.id for s in specs] == [r.id for r in result.regressions]
    return WorkbookContext(
        stored_values=True,
        formula_count=len(workbook.formula_cells()),
        workbook=workbook,
        specs=specs,
        results=result.regressions,
        parsed=locator.parsed,
    )


@pytest.mark.parametrize(
    ("file", "source_sheet", "target_sheet"),
    [
        ("ops_glue_runs_copied_sheets.xlsx", "Run 1", "Run 3"),  # sheets copied
        ("lab_three_photometers_side_by_side.xlsx", "Linearity", "Linearity"),  # across
        ("lab_sites_results_sheet.xlsx", "Results", "Results"),  # reading data sheets
        ("ops_se_slips.xlsx", "Sealer 3", "Sealer 6"),  # beside the data -> results sheet
    ],
)
def test_translating_a_sibling_reproduces_the_saved_formulas(
    file: str, source_sheet: str, target_sheet: str
) -> None:
    # Source: the formulas LibreOffice saved for the other block (written from one template).
    context = _context(file)
    group = next(iter(sibling_groups(blocks_of(context.specs, context.results))))
    source = next(b for b in group if b.sheet == source_sheet)
    target = next(b for b in reversed(group) if b.sheet == target_sheet and b is not source)
    compared = 0
    for position in ("slope", "intercept", "r_squared", "n", "t_slope"):
        src = next((c for p, c in source.cells.items() if p[0] == position), None)
        dst = next((c for p, c in target.cells.items() if p[0] == position), None)
        if src is None or dst is None or not (src.cell.formula and dst.cell.formula):
            continue
        moved = translate(src.cell.formula, source, src.cell.sheet, target)
        assert frame_form(moved, target, dst.cell.sheet) == frame_form(
            dst.cell.formula, target, dst.cell.sheet
        ), (moved, dst.cell.formula)
        compared += 1
    assert compared >= 3


@pytest.mark.parametrize(
    ("file", "cell", "what", "typed"),
    [
        ("ops_line_review_with_errors.xlsx", "Line 4!E12", "df", 10.0),
        ("lab_typed_counts.xlsx", "ISE Curve!E10", "df", 8.0),
        ("lab_typed_counts.xlsx", "Turbidity!E13", "df", 10.0),
        ("lab_typed_counts.xlsx", "Nitrite!E13", "n", 10.0),
    ],
)
def test_typed_counts_in_saved_formulas(file: str, cell: str, what: str, typed: float) -> None:
    # Source: the formula text as LibreOffice saved it; the count declared in the manifest note.
    workbook, _ = _audited(file)
    sheet, _, coord = cell.rpartition("!")
    stored = next(c for c in workbook.formula_cells() if c.address == cell)
    found = typed_counts("p_slope", parse(stored.formula or "", sheet))
    assert [(t.what, t.typed) for t in found] == [(what, typed)]


def test_counts_computed_from_the_data_are_not_typed() -> None:
    assert typed_counts("p_slope", parse("=T.DIST.2T(ABS(E11),COUNT(A4:A17)-2)", "S")) == []
    assert typed_counts("df", parse("=12-2", "S"))[0].typed == 10.0
    assert typed_counts("se_intercept", parse("=E6*SQRT(1/3+E7)", "S"))[0].typed == 3.0


def test_replace_argument_rewrites_only_the_named_call() -> None:
    formula = "=IF(E9>0,_xlfn.T.DIST.2T(ABS(MAX(E11,0)),12-2),TDIST(1,10,2))"
    assert replace_argument(formula, "T.DIST.2T", 1, "E9") == (
        "=IF(E9>0,_xlfn.T.DIST.2T(ABS(MAX(E11,0)),E9),TDIST(1,10,2))"
    )
    assert replace_argument(formula, "TDIST", 2, "1") == (
        "=IF(E9>0,_xlfn.T.DIST.2T(ABS(MAX(E11,0)),12-2),TDIST(1,10,1))"
    )
    assert replace_argument(formula, "TDIST", 5, "1") is None


def test_minor_while_right_major_when_wrong() -> None:
    # The manifest declares Run 3's pasted slope right and Run 4's from before two rows were
    # added; LibreOffice's stored values confirm both (fixtures/make_fixtures.py verifies them).
    _, result = _audited("ops_glue_runs_copied_sheets.xlsx")
    by_cell = {f.cells[0]: f for f in result.all_findings() if f.check == "pasted-result"}
    assert by_cell["Run 3!E4"].severity == "minor"
    assert by_cell["Run 4!E4"].severity == "major"
    run_4 = next(r for r in result.regressions if r.sheet == "Run 4")
    assert f"{_statsmodels(run_4)['slope']:.6g}" in by_cell["Run 4!E4"].message
