"""Never cry wolf: the causes of false alarms seen on real workbooks, each reproduced in an
invented workbook (fixtures/false_alarms, written by fixtures/make_false_alarm_fixtures.py and
recalculated by LibreOffice, so the stored values are a real engine's) or built here.

Expected values come from outside the code under test: numpy.polyfit and statsmodels for fits,
the layout each workbook was written with for ranges, and the rules of the design ("a total row
needs a word, a formula or a format", "the author's ranges define a regression").
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import openpyxl
import pytest
import statsmodels.api as sm
from hypothesis import given, settings
from hypothesis import strategies as st

from auditor.checks.merge import one_per_mistake, tidy_cells
from auditor.design.lackfit import designed_replicates
from auditor.formula.syntax import Ref
from auditor.locate.blocks import role_in_list, same_block
from auditor.locate.grouping import correlation_only, same_regression
from auditor.locate.spec import PairUse
from auditor.model import Finding, RegressionResult, WorkbookResult
from auditor.pipeline import audit as audit_module
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, Sheet

ROOT = Path(__file__).resolve().parents[1]
FA = ROOT / "fixtures" / "false_alarms"
POLICY = load_policy("general")


def _audit(name: str) -> WorkbookResult:
    result = audit_workbook(FA / name, POLICY)
    assert result.status != "unreadable", result.error
    return result


def _serious(result: WorkbookResult) -> list[Finding]:
    return [f for f in result.all_findings() if f.severity in ("critical", "major")]


def _by_y(result: WorkbookResult, y_range: str) -> RegressionResult:
    found = [r for r in result.regressions if r.y_range == y_range]
    assert found, [r.y_range for r in result.regressions]
    return found[0]


# --- separate regressions are not merged ---------------------------------------------------------


def test_two_edges_sharing_one_row_are_two_regressions() -> None:
    result = _audit("fa_wave_edges.xlsx")
    ranges = sorted((r.x_range, r.y_range, r.n) for r in result.regressions)
    assert ranges == [
        ("Tide Gauge!A1:A33", "Tide Gauge!B1:B33", 33),
        ("Tide Gauge!A33:A96", "Tide Gauge!B33:B96", 64),
    ]
    assert _serious(result) == []
    book = read_workbook(FA / "fa_wave_edges.xlsx")
    sheet = book.sheet("Tide Gauge")
    assert sheet is not None
    t = np.array([sheet.value(r, 1) for r in range(33, 97)], dtype=float)
    level = np.array([sheet.value(r, 2) for r in range(33, 97)], dtype=float)
    falling = _by_y(result, "Tide Gauge!B33:B96")
    assert falling.intended["slope"] == pytest.approx(np.polyfit(t, level, 1)[0], rel=1e-9)


def test_a_quadratic_and_a_line_through_the_origin_are_two_regressions() -> None:
    result = _audit("fa_curve_and_origin.xlsx")
    assert sorted((r.x_range, r.intercept) for r in result.regressions) == [
        ("Probe Curve!A2:A9", False),
        ("Probe Curve!A2:B9", True),
    ]
    assert _serious(result) == []
    quadratic = next(r for r in result.regressions if r.x_columns == 2)
    # statsmodels with a constant: the quadratic's intended fit includes its intercept.
    book = read_workbook(FA / "fa_curve_and_origin.xlsx")
    sheet = book.sheet("Probe Curve")
    assert sheet is not None
    x = np.array([sheet.value(r, 1) for r in range(2, 10)], dtype=float)
    y = np.array([sheet.value(r, 3) for r in range(2, 10)], dtype=float)
    reference = sm.OLS(y, sm.add_constant(np.column_stack([x, x * x]))).fit()
    assert quadratic.intended["intercept"] == pytest.approx(reference.params[0], rel=1e-9)
    assert quadratic.reported["intercept"].verdict == "confirmed"


def _use(x: Ref, y: Ref, function: str = "SLOPE", intercept: bool = True) -> PairUse:
    return PairUse(Cell(x.sheet, 1, 10, None), function, y, x, intercept)


@settings(max_examples=200, deadline=None)
@given(
    st.integers(min_value=2, max_value=200),
    st.integers(min_value=5, max_value=120),
    st.integers(min_value=-130, max_value=130),
)
def test_ranges_are_one_regression_only_when_they_share_half_their_rows(
    start: int, length: int, offset: int
) -> None:
    a_x, a_y = Ref("S", start, 1, start + length - 1, 1), Ref("S", start, 2, start + length - 1, 2)
    b_start = max(1, start + offset)
    b_x, b_y = (
        Ref("S", b_start, 1, b_start + length - 1, 1),
        Ref("S", b_start, 2, b_start + length - 1, 2),
    )
    shared = max(0, min(a_x.r2, b_x.r2) - max(a_x.r1, b_x.r1) + 1)
    assert same_regression(_use(a_x, a_y), _use(b_x, b_y)) == (2 * shared >= length)


def test_models_and_lags_are_not_merged() -> None:
    x, y = Ref("S", 2, 1, 9, 1), Ref("S", 2, 3, 9, 3)
    xx = Ref("S", 2, 1, 9, 2)
    assert not same_regression(_use(xx, y, "LINEST"), _use(x, y, "LINEST", intercept=False))
    assert not same_regression(_use(xx, y, "LINEST"), _use(x, y, "SLOPE"))
    lag1 = _use(Ref("S", 2, 1, 100, 1), Ref("S", 3, 1, 101, 1), "CORREL")
    lag2 = _use(Ref("S", 2, 1, 99, 1), Ref("S", 4, 1, 101, 1), "CORREL")
    assert not same_regression(lag1, lag2)
    assert same_regression(lag1, _use(Ref("S", 2, 1, 100, 1), Ref("S", 3, 1, 101, 1), "SLOPE"))
    assert correlation_only([lag1, lag2]) and not correlation_only([lag1, _use(x, y)])


# --- correlation alone is not a regression --------------------------------------------------------


def test_lagged_autocorrelations_and_a_lone_correl_are_not_regressions() -> None:
    result = _audit("fa_correlations.xlsx")
    assert result.status == "no-regressions"
    assert result.regressions == [] and _serious(result) == []


# --- a total row needs evidence -------------------------------------------------------------------


def test_a_value_that_equals_the_sum_above_by_chance_is_data() -> None:
    result = _audit("fa_totals.xlsx")
    dosing = _by_y(result, "Dosing!B4:B11")
    assert dosing.n == 8 and dosing.verdict == "confirmed"
    x = np.arange(1.0, 9.0)
    y = np.array([0.24, 0.48, 0.72, 0.97, 1.19, 1.45, 1.67, 1.93])
    assert dosing.intended["slope"] == pytest.approx(np.polyfit(x, y, 1)[0], rel=1e-9)
    assert [f for f in dosing.findings if f.severity in ("major", "critical")] == []


@pytest.mark.parametrize("sheet", ["Dosing Log", "Dosing Means"])
def test_a_summary_formula_or_a_format_of_its_own_marks_a_total(sheet: str) -> None:
    regression = _by_y(_audit("fa_totals.xlsx"), f"{sheet}!B4:B11")
    assert regression.n == 7  # the seven data rows; the summary row left out
    total = [f for f in regression.findings if f.kind == "total-row"]
    assert len(total) == 1 and f"{sheet}!B11" in total[0].cells


# --- lack of fit only for designed replicates -----------------------------------------------------


def test_designed_replicates_and_coincidental_ties() -> None:
    assert designed_replicates([1, 1, 2, 2, 3, 3, 4, 4])  # duplicates at every level
    assert designed_replicates([1, 2, 3, 3, 3, 4, 5])  # centre-point replicates
    assert not designed_replicates([1, 2, 3, 4, 4, 5, 6, 7, 8])  # one repeated row
    rng = np.random.default_rng(3)
    rounded = np.round(rng.normal(0.0, 0.02, 5000), 3)  # rounded returns: many chance ties
    assert not designed_replicates(rounded)
    assert not designed_replicates([])


# --- labels are not borrowed across blocks --------------------------------------------------------


def test_another_blocks_typed_summary_is_not_attached() -> None:
    result = _audit("fa_blocks.xlsx")
    assert len(result.regressions) == 3
    for regression in result.regressions:
        assert {k.split("@")[0] for k in regression.reported} == {"slope", "intercept"}
    assert _serious(result) == []


def _sheet(cells: dict[tuple[int, int], object]) -> Sheet:
    sheet = Sheet("S")
    for (row, col), value in cells.items():
        sheet.cells[(row, col)] = Cell("S", row, col, value)  # type: ignore[arg-type]
    return sheet


def test_a_bare_standard_error_among_fit_statistics_is_the_residual_sd() -> None:
    listing = _sheet({(1, 1): "R Square", (2, 1): "Standard Error", (3, 1): "Observations"})
    assert role_in_list(listing, 2, 1, "se_slope") == "residual_sd"
    coefficients = _sheet({(1, 1): "Slope", (2, 1): "Standard Error", (3, 1): "Intercept"})
    assert role_in_list(coefficients, 2, 1, "se_slope") == "se_slope"
    assert role_in_list(listing, 2, 1, "slope") == "slope"


def test_a_value_joins_the_block_it_touches() -> None:
    sheet = _sheet({(1, 1): "Slope", (1, 2): 0.5, (2, 1): "R Square", (2, 2): 0.9, (2, 4): 7})
    assert same_block(sheet, (2, 2), {(1, 2)})
    assert not same_block(sheet, (2, 4), {(1, 2)})  # across the empty column C


# --- an unsupported function or an error costs one regression at most -----------------------------


def test_unsupported_functions_and_ids_lose_nothing() -> None:
    result = _audit("fa_unsupported.xlsx")
    assert sorted(r.sheet for r in result.regressions) == ["Plain", "Scaled", "Soil Probes"]
    assert _serious(result) == []
    scaled = _by_y(result, "Scaled!B4:B13")
    assert scaled.reported["slope"].verdict == "unverifiable"
    assert scaled.reported["intercept"].verdict == "confirmed"
    probes = _by_y(result, "Soil Probes!F4:F13")
    assert probes.n == 10 and probes.verdict == "confirmed"


def test_a_failure_inside_one_regression_leaves_the_others_audited(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    real = audit_module.fit_ols
    calls = {"n": 0}

    def failing_once(*args: object, **kwargs: object) -> object:
        calls["n"] += 1
        if calls["n"] == 2:
            raise ZeroDivisionError("planted for the test")
        return real(*args, **kwargs)  # type: ignore[arg-type]

    monkeypatch.setattr(audit_module, "fit_ols", failing_once)
    result = audit_workbook(FA / "fa_siblings.xlsx", POLICY)
    assert result.status == "audited" and len(result.regressions) == 3
    lost = [r for r in result.regressions if r.verdict == "unverifiable"]
    assert len(lost) == 1
    assert "internal error (ZeroDivisionError: planted for the test)" in lost[0].findings[0].message
    assert all(v.verdict == "unverifiable" for v in lost[0].reported.values())
    assert sum(r.verdict == "confirmed" for r in result.regressions) == 2


# --- one finding per mistake ----------------------------------------------------------------------


def test_findings_of_one_cause_merge_at_the_cause() -> None:
    shift = Finding("xy-rows-misaligned", "major", "y moved.", "range-shifted", ["S!E4", "S!E5"])
    short = Finding("rows-outside-range", "major", "rows left out.", "range-short", ["S!B5:B16"])
    spoiled = Finding("stat-recompute", "critical", "E9 wrong. More.", None, ["S!E9", "S!E9"])
    spoiled.evidence = {"key": "p_slope", "reported": 0.2, "intended": 0.01}
    sibling = Finding("sibling-formula-differs", "minor", "differs.", "copied-block", ["T!A1"])
    reach = {"S!E4": ["S!E4", "S!E9"]}
    merged = one_per_mistake([spoiled, short, shift, sibling], lambda cell: reach.get(cell, [cell]))
    assert [f.check for f in merged] == [
        "rows-outside-range",
        "xy-rows-misaligned",
        "sibling-formula-differs",
    ]
    cause = merged[1]
    assert cause.severity == "critical" and cause.cells == ["S!E4", "S!E5", "S!E9"]
    assert cause.evidence["merged_checks"] == ["xy-rows-misaligned", "stat-recompute"]
    assert "It makes 1 reported value(s) wrong: p-value of the slope in S!E9 0.2 (recomputed " in (
        cause.message
    )
    assert "E9 wrong" not in cause.message  # the value is said once, in the cause's words


def test_cells_are_listed_once_and_in_order() -> None:
    assert tidy_cells(["S!E12", "S!E9", "S!E12", "S!E10", "S!B4:B9"]) == [
        "S!E12",
        "S!B4:B9",
        "S!E9",
        "S!E10",
    ]


def test_an_annotated_cell_carries_each_finding_once() -> None:
    from auditor.model import AuditResult
    from auditor.review.annotate import annotate_book

    book = openpyxl.Workbook()
    book.active.title = "S"
    finding = Finding("total-row-in-range", "major", "Row 9 is a total.", "total-row")
    finding.cells = ["S!B4:B9", "S!B4", "S!B4"]
    workbook = WorkbookResult("a.xlsx", "", "audited", findings=[finding])
    annotate_book(book, workbook, AuditResult("0", "general", [workbook]), [])
    note = book["S"]["B4"].comment
    assert note is not None and note.text.count("Row 9 is a total.") == 1
