"""The NIST StRD LINEST workbooks (fixtures/strd/): no false alarm, and tolerances that say why.

The workbooks hold the 11 NIST StRD linear datasets (NIST Statistical Reference Datasets, Linear
Least Squares Regression; tests/reference/) with LINEST arrays whose stored values LibreOffice
computed (fixtures/make_strd_workbooks.py). LibreOffice's values are correct to what double
precision allows, so a sound audit confirms them all; a fixed 1e-9 tolerance did not (52 major
findings before the conditioning-aware agreement).
"""

from __future__ import annotations

import shutil
import sys
from functools import cache
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from strd_reference import load

from auditor.compare.conditioning import agree_conditioned
from auditor.fit.ols import fit_ols
from auditor.model import WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

FIXTURES = Path(__file__).resolve().parents[1].parent / "fixtures"
STRD = FIXTURES / "strd"
sys.path.insert(0, str(FIXTURES))
from make_strd_workbooks import DATASETS, workbook_name  # noqa: E402


@cache
def audited(name: str) -> WorkbookResult:
    return audit_workbook(STRD / workbook_name(name), load_policy("general"))


@pytest.mark.parametrize("name", list(DATASETS))
def test_every_linest_block_is_found_and_confirmed(name: str) -> None:
    _, degree, intercept = DATASETS[name]
    result = audited(name)
    assert result.status == "audited"
    assert len(result.regressions) == 1
    regression = result.regressions[0]
    assert regression.intercept is intercept
    assert regression.x_columns == (degree or load(name).x.shape[1])
    severe = [f for f in result.all_findings() if f.severity in ("major", "critical")]
    assert severe == [], [f.message for f in severe]
    for key, value in regression.reported.items():
        if value.intended is not None:  # F of an exact fit is infinite: nothing to compare
            assert value.verdict == "confirmed", (key, value.value, value.intended, value.tolerance)


def test_a_fixed_tolerance_would_cry_wolf_on_wampler4() -> None:
    # LibreOffice's stored x² coefficient of NIST StRD Wampler4 (certified 1) is off by 3e-9
    # relative: rounding, not a mistake. The record says which tolerance admitted it and why.
    regression = audited("Wampler4").regressions[0]
    value = regression.reported["slope[2]"]
    assert isinstance(value.value, float)
    assert abs(value.value - 1.0) > 1e-9
    assert value.verdict == "confirmed"
    assert "condition number 2.22e+03" in value.tolerance
    assert regression.conditioning["solver"] == "exact"
    assert regression.conditioning["digits_left"] == pytest.approx(12.6, abs=0.05)


def test_an_exact_fit_gets_an_absolute_floor() -> None:
    # NIST StRD Wampler1 certifies every standard error as 0; LibreOffice stores about 4e-10.
    value = audited("Wampler1").regressions[0].reported["se_slope[1]"]
    assert isinstance(value.value, float) and 1e-11 < value.value < 1e-8
    assert value.intended == 0.0
    assert value.verdict == "confirmed"
    assert "exact fit" in value.tolerance


def test_a_dropped_row_is_still_a_mismatch_on_an_ill_conditioned_fit() -> None:
    # NIST StRD Wampler3 (degree 5, condition number 2.2e3): the same fit without its last row
    # stands for an author's range that stops one row short. Every coefficient must disagree.
    data = load("Wampler3")
    full = fit_ols(data.x, data.y)
    short = fit_ols(data.x[:-1], data.y[:-1])
    reported = np.concatenate(([short.intercept_value], short.slopes))
    intended = np.concatenate(([full.intercept_value], full.slopes))
    keys = ["intercept"] + [f"slope[{j}]" for j in range(1, 6)]
    for key, shown, true in zip(keys, reported, intended, strict=True):
        judged = agree_conditioned(float(shown), float(true), key, 1e-9, None, full.conditioning)
        assert judged.agrees is False, (key, shown, true, judged.tolerance)


def test_a_change_of_one_part_per_million_is_caught_on_longley() -> None:
    # NIST StRD Longley (condition number 4.3e4, 11 digits left to an engine).
    data = load("Longley")
    fit = fit_ols(data.x, data.y)
    for j in range(6):
        true = float(fit.slopes[j])
        judged = agree_conditioned(
            true * (1 + 1e-6), true, f"slope[{j + 1}]", 1e-9, None, fit.conditioning
        )
        assert judged.agrees is False


def test_beyond_what_doubles_can_tell_the_value_is_unverifiable() -> None:
    # x, x², …, x¹¹ over 1..2: a condition number near 1.6e12, where double-precision engines
    # may differ in the second digit of a coefficient: no verdict either way, and the reason.
    x = np.linspace(1.0, 2.0, 30)
    design = np.column_stack([x**p for p in range(1, 12)])
    y = np.sin(3 * x) + 0.001 * np.cos(40 * x)
    fit = fit_ols(design, y)
    assert fit.conditioning is not None and fit.conditioning.condition_number > 1e12
    true = float(fit.slopes[0])
    judged = agree_conditioned(true * 1.01, true, "slope[1]", 1e-9, None, fit.conditioning)
    assert judged.agrees is None
    assert "cannot be told from a mistake" in judged.tolerance


@pytest.mark.optional
def test_libreoffice_recalculation_reproduces_the_stored_values(tmp_path: Path) -> None:
    # LibreOffice's recalculation: the committed workbooks' stored LINEST values are what a
    # fresh run of fixtures/make_strd_workbooks.py gets from LibreOffice.
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    from make_fixtures import recalculate
    from make_strd_workbooks import write

    written = tmp_path / "written"
    written.mkdir()
    out = tmp_path / "out"
    out.mkdir()
    names = ("Wampler4", "Longley")
    recalculate([write(name, written) for name in names], out, tmp_path)
    for name in names:
        fresh = openpyxl.load_workbook(out / workbook_name(name), data_only=True)["Data"]
        kept = openpyxl.load_workbook(STRD / workbook_name(name), data_only=True)["Data"]
        for row_fresh, row_kept in zip(fresh.iter_rows(), kept.iter_rows(), strict=True):
            assert [c.value for c in row_fresh] == [c.value for c in row_kept]
