"""Hand-built slopes and intercepts, recognised by what they compute (auditor.locate.handbuilt),
and the mistakes made building them (auditor.diagnose.handbuilt).

Scenario (invented): Brindle Hollow Cooperative measures how much its orchard plots yield per
millimetre of irrigation, and a small fund desk computes the beta of its holdings against an
index. Each workbook is written here with XlsxWriter and carries no stored values, so the
"reported" values are the evaluator's (the LibreOffice test at the end covers stored values).

Every expected number comes from numpy (polyfit, cov, var) or statsmodels OLS, never from the
code under test.
"""

from __future__ import annotations

import shutil
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
import xlsxwriter
from make_fixtures import recalculate as recalculate_with_libreoffice

from auditor.grid import column_letter
from auditor.model import RegressionResult, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

RELATIVE = 1e-9

# How people spell the same least-squares slope of y on x (ranges given as text): each gives
# sxy/sxx exactly, up to rounding.
SPELLINGS: dict[str, Callable[[str, str, int], str]] = {
    "covariance.s over var.s": lambda y, x, n: f"_xlfn.COVARIANCE.S({y},{x})/_xlfn.VAR.S({x})",
    "covariance.p over var.p": lambda y, x, n: f"_xlfn.COVARIANCE.P({x},{y})/_xlfn.VAR.P({x})",
    "covar over varp": lambda y, x, n: f"COVAR({y},{x})/VARP({x})",
    "correl times stdev ratio": lambda y, x, n: f"CORREL({x},{y})*STDEV({y})/STDEV({x})",
    "centred sumproduct": lambda y, x, n: (
        f"SUMPRODUCT(({x}-AVERAGE({x}))*({y}-AVERAGE({y})))/SUMPRODUCT(({x}-AVERAGE({x}))^2)"
    ),
    "raw sums": lambda y, x, n: (
        f"(COUNT({x})*SUMPRODUCT({x},{y})-SUM({x})*SUM({y}))/(COUNT({x})*SUMSQ({x})-SUM({x})^2)"
    ),
    "devsq denominator": lambda y, x, n: (
        f"SUMPRODUCT({x}-AVERAGE({x}),{y}-AVERAGE({y}))/DEVSQ({x})"
    ),
}
WRAPPERS: dict[str, Callable[[str], str]] = {
    "bare": lambda f: f,
    "iferror": lambda f: f'IFERROR({f},"n/a")',
    "iferror blank": lambda f: f'IFERROR({f},"")',
}


def _data(seed: int, n: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = np.round(rng.uniform(10, 60, n), 1)
    y = np.round(3.5 + 0.82 * x + rng.normal(0, 2.5, n), 2)
    return x, y


def _audit(path: Path) -> WorkbookResult:
    return audit_workbook(path, load_policy("general"))


def _handbuilt(result: WorkbookResult) -> list[RegressionResult]:
    return [r for r in result.regressions if r.found_by == "hand-built"]


def _write_columns(
    path: Path,
    x: np.ndarray,
    y: np.ndarray,
    formulas: dict[str, str],
    y_first: bool = False,
    y_values: list[object] | None = None,
    labels: dict[str, str] | None = None,
) -> tuple[str, str]:
    """Plot, irrigation (x) and yield (y) from row 2; formulas at the given cells. Returns the
    x and y ranges as the audit writes them."""
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Plots")
    x_col, y_col = (2, 1) if y_first else (1, 2)
    sheet.write_row(0, 0, ["Plot", "", ""])
    sheet.write(0, x_col, "Irrigation mm")
    sheet.write(0, y_col, "Yield kg")
    cells = y_values if y_values is not None else list(y)
    for i, (xv, yv) in enumerate(zip(x, cells, strict=True)):
        sheet.write(i + 1, 0, f"P{i + 1}")
        sheet.write_number(i + 1, x_col, float(xv))
        if isinstance(yv, str):
            sheet.write_string(i + 1, y_col, yv)
        else:
            sheet.write_number(i + 1, y_col, float(yv))  # type: ignore[arg-type]
    for cell, formula in formulas.items():
        sheet.write_formula(cell, "=" + formula)
    for cell, text in (labels or {}).items():
        sheet.write_string(cell, text)
    book.close()
    last = len(x) + 1
    xl, yl = column_letter(x_col + 1), column_letter(y_col + 1)
    return f"Plots!{xl}2:{xl}{last}", f"Plots!{yl}2:{yl}{last}"


def _ranges(x_text: str, y_text: str) -> tuple[str, str]:
    return x_text.split("!")[1], y_text.split("!")[1]


CASES = [
    (seed, spelling, wrapper, y_first)
    for seed, (spelling, wrapper, y_first) in enumerate(
        (s, w, bool(i % 2)) for i, (s, w) in enumerate((s, w) for s in SPELLINGS for w in WRAPPERS)
    )
]


@pytest.mark.parametrize(("seed", "spelling", "wrapper", "y_first"), CASES)
def test_every_spelling_is_found_and_fitted(
    tmp_path: Path, seed: int, spelling: str, wrapper: str, y_first: bool
) -> None:
    n = 8 + seed % 9
    x, y = _data(seed, n)
    last = n + 1
    xl, yl = ("C", "B") if y_first else ("B", "C")
    formula = WRAPPERS[wrapper](SPELLINGS[spelling](f"{yl}2:{yl}{last}", f"{xl}2:{xl}{last}", n))
    x_range, y_range = _write_columns(tmp_path / "plots.xlsx", x, y, {"F2": formula}, y_first)
    (found,) = _handbuilt(_audit(tmp_path / "plots.xlsx"))
    assert (found.x_range, found.y_range) == (x_range, y_range)
    slope, intercept = np.polyfit(x, y, 1)  # outside reference: numpy least squares
    assert found.intended["slope"] == pytest.approx(slope, rel=RELATIVE)
    assert found.intended["intercept"] == pytest.approx(intercept, rel=RELATIVE)
    assert found.reported["slope"].cell == "Plots!F2"
    assert found.reported["slope"].verdict == "confirmed"


def test_slope_built_in_steps_and_its_intercept_match_statsmodels(tmp_path: Path) -> None:
    # Means, variance and covariance in their own cells, then b1 = cov/var and b0 = ȳ − b1·x̄.
    x, y = _data(101, 14)
    formulas = {
        "F2": "AVERAGE(B2:B15)",
        "G2": "AVERAGE(C2:C15)",
        "H2": "_xlfn.VAR.P(B2:B15)",
        "I2": "_xlfn.COVARIANCE.P(B2:B15,C2:C15)",
        "J2": "I2/H2",
        "K2": "G2-J2*F2",
        "L2": "K$2+J$2*B2",  # a fitted value: neither slope nor intercept
    }
    _write_columns(tmp_path / "steps.xlsx", x, y, formulas)
    (found,) = _handbuilt(_audit(tmp_path / "steps.xlsx"))
    ols = sm.OLS(y, sm.add_constant(x)).fit()  # outside reference: statsmodels
    assert found.reported["slope"].cell == "Plots!J2"
    assert found.reported["intercept"].cell == "Plots!K2"
    assert found.reported["slope"].as_written == pytest.approx(ols.params[1], rel=RELATIVE)
    assert found.reported["intercept"].as_written == pytest.approx(ols.params[0], rel=RELATIVE)
    assert found.intended["se_slope"] == pytest.approx(ols.bse[1], rel=1e-8)
    assert {v.verdict for v in found.reported.values()} == {"confirmed"}


def test_data_in_rows_is_found(tmp_path: Path) -> None:
    x, y = _data(7, 9)
    book = xlsxwriter.Workbook(str(tmp_path / "rows.xlsx"))
    sheet = book.add_worksheet("Рядки")  # a non-Latin sheet name
    sheet.write_row(0, 1, list(map(float, x)))
    sheet.write_row(1, 1, list(map(float, y)))
    sheet.write_formula("B4", "=_xlfn.COVARIANCE.S(B2:J2,B1:J1)/_xlfn.VAR.S(B1:J1)")
    book.close()
    (found,) = _handbuilt(_audit(tmp_path / "rows.xlsx"))
    assert (found.x_range, found.y_range) == ("Рядки!B1:J1", "Рядки!B2:J2")
    assert found.intended["slope"] == pytest.approx(np.polyfit(x, y, 1)[0], rel=RELATIVE)


def test_population_sample_mix_is_diagnosed(tmp_path: Path) -> None:
    x, y = _data(31, 6)
    _write_columns(tmp_path / "mix.xlsx", x, y, {"F2": "COVAR(C2:C7,B2:B7)/VAR(B2:B7)"})
    (found,) = _handbuilt(_audit(tmp_path / "mix.xlsx"))
    slope = np.polyfit(x, y, 1)[0]
    reported = found.reported["slope"]
    assert reported.verdict == "mismatch"
    # COVAR divides by n, VAR by n − 1: numpy's cov with bias=True over var with ddof=1.
    expected = np.cov(x, y, bias=True)[0, 1] / np.var(x, ddof=1)
    assert reported.as_written == pytest.approx(expected, rel=RELATIVE)
    assert expected == pytest.approx(slope * 5 / 6, rel=RELATIVE)
    (finding,) = [f for f in found.findings if f.check == "stat-recompute"]
    assert finding.kind == "population-sample-mix"
    assert finding.severity in ("major", "critical")
    assert finding.evidence["reproduced"] == pytest.approx(expected, rel=RELATIVE)
    assert "5/6" in finding.message


def test_reverse_mix_is_diagnosed(tmp_path: Path) -> None:
    x, y = _data(32, 9)
    formula = "_xlfn.COVARIANCE.S(C2:C10,B2:B10)/_xlfn.VAR.P(B2:B10)"
    _write_columns(tmp_path / "mix2.xlsx", x, y, {"F2": formula})
    (found,) = _handbuilt(_audit(tmp_path / "mix2.xlsx"))
    (finding,) = [f for f in found.findings if f.check == "stat-recompute"]
    assert finding.kind == "population-sample-mix"
    expected = np.cov(x, y, ddof=1)[0, 1] / np.var(x, ddof=0)
    assert finding.evidence["reproduced"] == pytest.approx(expected, rel=RELATIVE)


@pytest.mark.parametrize("missing", [[2], [0, 5, 6], [1, 3, 8, 9]])
def test_text_on_one_side_is_diagnosed_as_rows_that_differ(
    tmp_path: Path, missing: list[int]
) -> None:
    x, y = _data(40 + len(missing), 12)
    y_cells: list[object] = list(y)
    for i in missing:
        y_cells[i] = "n/a"
    formula = 'IFERROR(_xlfn.COVARIANCE.S(C2:C13,B2:B13)/_xlfn.VAR.S(B2:B13),"n/a")'
    _write_columns(tmp_path / "beta.xlsx", x, y, {"F2": formula}, y_values=y_cells)
    (found,) = _handbuilt(_audit(tmp_path / "beta.xlsx"))
    keep = np.array([i not in missing for i in range(12)])
    paired_slope = np.polyfit(x[keep], y[keep], 1)[0]
    # COVARIANCE.S over the paired rows, VAR.S over every x: numpy, row sets made by hand.
    expected = np.cov(x[keep], y[keep], ddof=1)[0, 1] / np.var(x, ddof=1)
    reported = found.reported["slope"]
    assert found.intended["slope"] == pytest.approx(paired_slope, rel=RELATIVE)
    assert reported.as_written == pytest.approx(expected, rel=RELATIVE)
    (finding,) = [f for f in found.findings if f.check == "stat-recompute"]
    assert finding.kind == "rows-differ"
    assert finding.evidence["reproduced"] == pytest.approx(expected, rel=RELATIVE)
    assert "all 12 numbers" in finding.message
    # The text rows are in the variance, not skipped: no "range beyond the table" finding.
    assert [f for f in found.findings if f.check == "range-beyond-table"] == []


def test_intercept_built_with_another_blocks_slope(tmp_path: Path) -> None:
    # Two calibration blocks, each a LINEST slope in one cell and an offset column y − b·x
    # averaged into the intercept; the second block's offsets still use $F$3, the first slope.
    book = xlsxwriter.Workbook(str(tmp_path / "blocks.xlsx"))
    sheet = book.add_worksheet("Gauges")
    blocks = []
    for index, top in enumerate((3, 15)):
        x, y = _data(60 + index, 8)
        last = top + 7
        for i in range(8):
            sheet.write_number(top - 1 + i, 1, float(x[i]))
            sheet.write_number(top - 1 + i, 3, float(y[i]))
            slope_cell = "$F$3" if index == 1 else f"$F${top}"  # the copy kept $F$3
            sheet.write_formula(top - 1 + i, 4, f"=D{top + i}-(B{top + i}*{slope_cell})")
        sheet.write_formula(f"F{top}", f"=LINEST(D{top}:D{last},B{top}:B{last})")
        sheet.write_formula(f"E{top - 1}", f"=AVERAGE(E{top}:E{last})")
        blocks.append((x, y))
    book.close()
    result = _audit(tmp_path / "blocks.xlsx")
    by_y = {r.y_range: r for r in result.regressions}
    assert set(by_y) == {"Gauges!D3:D10", "Gauges!D15:D22"}
    first, second = by_y["Gauges!D3:D10"], by_y["Gauges!D15:D22"]
    (x1, y1), (x2, y2) = blocks
    b1 = np.polyfit(x1, y1, 1)[0]
    assert first.reported["slope"].cell == "Gauges!F3"  # single-cell LINEST: the slope
    assert first.reported["intercept"].verdict == "confirmed"
    wrong = y2.mean() - b1 * x2.mean()
    assert second.reported["intercept"].as_written == pytest.approx(wrong, rel=RELATIVE)
    (finding,) = [f for f in second.findings if f.check == "stat-recompute"]
    assert finding.kind == "copied-block"
    assert finding.cells == ["Gauges!E14", "Gauges!E15:E22"]
    assert "Gauges!F3" in finding.message and "Gauges!E15:E22" in finding.message
    assert finding.evidence["reproduced"] == pytest.approx(wrong, rel=RELATIVE)


def test_a_copy_of_the_block_beside_it_is_one_regression(tmp_path: Path) -> None:
    x, y = _data(70, 7)
    book = xlsxwriter.Workbook(str(tmp_path / "copy.xlsx"))
    sheet = book.add_worksheet("Desk")
    for i in range(7):
        sheet.write_row(i + 1, 1, [float(y[i]), float(x[i])])
        sheet.write_row(i + 1, 8, [float(y[i]), float(x[i])])
    sheet.write_formula("E2", "=_xlfn.COVARIANCE.S(B2:B8,C2:C8)/_xlfn.VAR.S(C2:C8)")
    sheet.write_formula("L2", "=_xlfn.COVARIANCE.S(I2:I8,J2:J8)/_xlfn.VAR.S(J2:J8)")
    sheet.write_formula("E12", "=+E2")  # a link to the slope is not a second slope
    book.close()
    (found,) = _handbuilt(_audit(tmp_path / "copy.xlsx"))
    assert {v.cell for v in found.reported.values()} >= {"Desk!E2", "Desk!L2"}
    assert "Desk!E12" not in {v.cell for v in found.reported.values()}


NOT_REGRESSIONS = {
    "correlation alone": {"F2": "CORREL(B2:B13,C2:C13)"},
    "lagged autocorrelation": {"F2": "CORREL(C3:C13,C2:C12)", "F3": "CORREL(C4:C13,C2:C11)"},
    "logistic score": {"F2": "1/(1+EXP(-(0.2+SUMPRODUCT(B2:B13,C2:C13)/1000)))"},
    "line from typed constants": {"F2": "0.82*B2+3.5", "F3": "0.82*B3+3.5"},
    "ratio column": {"F2": "C2/B2", "F3": "C3/B3", "F4": "AVERAGE(F2:F3)"},
    "means and spreads": {"F2": "AVERAGE(C2:C13)-AVERAGE(B2:B13)", "F3": "STDEV(C2:C13)"},
    "variance ratio": {"F2": "VAR(C2:C13)/VAR(B2:B13)"},
}


@pytest.mark.parametrize("name", sorted(NOT_REGRESSIONS))
def test_other_computations_are_not_slopes(tmp_path: Path, name: str) -> None:
    x, y = _data(80, 12)
    _write_columns(tmp_path / "other.xlsx", x, y, NOT_REGRESSIONS[name])
    assert _handbuilt(_audit(tmp_path / "other.xlsx")) == []


def test_group_proportions_of_indicator_data_are_not_slopes(tmp_path: Path) -> None:
    # With 0/1 columns a least-squares slope is a difference of two proportions and the
    # intercept a proportion (by algebra): COUNTIFS ratios are group shares, not a line. The
    # stored values are those a saved file carries (numpy counts; COUNTIFS is not evaluated).
    rng = np.random.default_rng(160)
    x = rng.integers(0, 2, 20).astype(float)
    y = np.where(rng.random(20) < 0.3 + 0.4 * x, 1.0, 0.0)
    slope, intercept = np.polyfit(x, y, 1)  # numpy: the identity the test relies on
    shares = y[x == 1].mean() - y[x == 0].mean(), y[x == 0].mean()
    assert (slope, intercept) == pytest.approx(shares, rel=1e-9)
    counts = {
        "F2": ("COUNTIFS(B2:B21,1,C2:C21,1)", float(np.sum((x == 1) & (y == 1)))),
        "F3": ("COUNTIFS(B2:B21,1,C2:C21,0)", float(np.sum((x == 1) & (y == 0)))),
        "F4": ("COUNTIFS(B2:B21,0,C2:C21,1)", float(np.sum((x == 0) & (y == 1)))),
        "F5": ("COUNTIFS(B2:B21,0,C2:C21,0)", float(np.sum((x == 0) & (y == 0)))),
        "G2": ("F2/(F2+F3)-F4/(F4+F5)", float(shares[0])),
        "G3": ("F4/(F4+F5)", float(shares[1])),
    }
    path = tmp_path / "shares.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Plots")
    for i in range(20):
        sheet.write_row(i + 1, 1, [float(x[i]), float(y[i])])
    for cell, (formula, value) in counts.items():
        sheet.write_formula(cell, "=" + formula, None, value)
    book.close()
    assert _handbuilt(_audit(path)) == []


def test_goodness_of_fit_from_fitted_values_is_not_a_slope(tmp_path: Path) -> None:
    # R² = SSR/(SSR + SSE) from fitted-value columns equals, by algebra, the slope of the
    # centred fitted values on y: a column computed from x is not data.
    x, y = _data(90, 12)
    formulas = {
        "F2": "SLOPE(C2:C13,B2:B13)",
        "G2": "INTERCEPT(C2:C13,B2:B13)",
        "H2": "AVERAGE(C2:C13)",
        "K2": "SUMSQ(I2:I13)",
        "L2": "SUMSQ(J2:J13)",
        "M2": "L2/(L2+K2)",
    }
    for r in range(2, 14):
        formulas[f"D{r}"] = f"$G$2+$F$2*B{r}"
        formulas[f"I{r}"] = f"C{r}-D{r}"
        formulas[f"J{r}"] = f"D{r}-$H$2"
    _write_columns(tmp_path / "fit.xlsx", x, y, formulas)
    result = _audit(tmp_path / "fit.xlsx")
    assert _handbuilt(result) == []
    (only,) = result.regressions
    assert (
        "Plots!M2" not in {v.cell for v in only.reported.values()}
        or only.reported["r_squared"].cell == "Plots!M2"
    )


def _recalculate(source: Path, out_dir: Path, profile: Path) -> Path:
    out_dir.mkdir(parents=True, exist_ok=True)
    recalculate_with_libreoffice([source], out_dir, profile)  # the fixtures' own recalculation
    return out_dir / source.name


@pytest.mark.optional
def test_stored_values_from_libreoffice(tmp_path: Path) -> None:
    # Outside check: LibreOffice computes and stores each cell; the recogniser reads the stored
    # values (what an author saw) and numpy gives the expected slope.
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    x, y = _data(5, 10)
    y_cells: list[object] = list(y)
    y_cells[4] = "n/a"
    formulas = {
        "F2": "_xlfn.COVARIANCE.S(C2:C11,B2:B11)/_xlfn.VAR.S(B2:B11)",
        "F3": "CORREL(B2:B11,C2:C11)*STDEV(C2:C11)/STDEV(B2:B11)",
    }
    _write_columns(tmp_path / "in.xlsx", x, y, formulas, y_values=y_cells)
    output = _recalculate(tmp_path / "in.xlsx", tmp_path / "out", tmp_path / "profile")
    result = _audit(output)
    assert result.stored_values
    (found,) = _handbuilt(result)
    keep = np.arange(10) != 4
    assert found.intended["slope"] == pytest.approx(np.polyfit(x[keep], y[keep], 1)[0], rel=1e-9)
    slope_cells = {v.cell: v for v in found.reported.values() if v.key.startswith("slope")}
    # Both keep row 6's x in the denominator (VAR.S, STDEV) though CORREL and COVARIANCE.S
    # drop the pair: numpy over the row sets each function uses.
    expected = np.cov(x[keep], y[keep], ddof=1)[0, 1] / np.var(x, ddof=1)
    r = np.corrcoef(x[keep], y[keep])[0, 1]
    expected_r = r * np.std(y[keep], ddof=1) / np.std(x, ddof=1)
    assert slope_cells["Plots!F2"].value == pytest.approx(expected, rel=1e-9)
    assert slope_cells["Plots!F3"].value == pytest.approx(expected_r, rel=1e-9)
    kinds = {f.kind for f in found.findings if f.check == "stat-recompute"}
    assert kinds == {"rows-differ"}


def test_a_slope_typed_into_formulas_is_checked_at_its_precision(tmp_path: Path) -> None:
    # A required-return column =rf + beta·(premium) with the beta typed in: 2 decimals that
    # agree with the slope are a right copy; a copy from an older run is flagged.
    x, y = _data(120, 10)
    slope = float(np.polyfit(x, y, 1)[0])  # outside reference: numpy
    right, stale = round(slope, 2), round(slope * 1.006, 3)
    formulas = {"F2": "_xlfn.COVARIANCE.S(C2:C11,B2:B11)/_xlfn.VAR.S(B2:B11)"}
    for r in range(2, 12):
        formulas[f"G{r}"] = f"0.5+{right}*B{r}"
        formulas[f"H{r}"] = f"0.5+{stale}*(B{r}-0.1)"
        formulas[f"I{r}"] = f"1.5*B{r}"  # a whole-number factor: a unit, not a slope
    _write_columns(tmp_path / "typed.xlsx", x, y, formulas)
    (found,) = _handbuilt(_audit(tmp_path / "typed.xlsx"))
    typed = {v.cell: v for v in found.reported.values() if v.source == "typed"}
    assert set(typed) == {"Plots!G2", "Plots!H2"}
    assert typed["Plots!G2"].value == right and typed["Plots!G2"].verdict == "confirmed"
    assert typed["Plots!H2"].value == stale and typed["Plots!H2"].verdict == "mismatch"


def test_a_slope_through_the_origin_is_found_without_intercept(tmp_path: Path) -> None:
    x, y = _data(130, 9)
    formulas = {"F2": "SUMPRODUCT(B2:B10,C2:C10)/SUMSQ(B2:B10)", "F3": "SUM(C2:C10)/SUM(B2:B10)"}
    _write_columns(tmp_path / "origin.xlsx", x, y, formulas)
    (found,) = _handbuilt(_audit(tmp_path / "origin.xlsx"))
    assert found.intercept is False
    ols = sm.OLS(y, x).fit()  # outside reference: statsmodels, no constant
    assert found.intended["slope"] == pytest.approx(ols.params[0], rel=RELATIVE)
    assert found.intended["se_slope"] == pytest.approx(ols.bse[0], rel=1e-8)
    assert [v.cell for v in found.reported.values()] == ["Plots!F2"]  # a ratio of sums is not


def test_whole_columns_with_their_headers(tmp_path: Path) -> None:
    x, y = _data(140, 11)
    formulas = {"F2": "_xlfn.COVARIANCE.S(C:C,B:B)/_xlfn.VAR.S(B:B)"}
    _write_columns(tmp_path / "columns.xlsx", x, y, formulas)
    (found,) = _handbuilt(_audit(tmp_path / "columns.xlsx"))
    assert found.intended["slope"] == pytest.approx(np.polyfit(x, y, 1)[0], rel=RELATIVE)
    assert found.n == 11
    assert found.reported["slope"].verdict == "confirmed"


def test_statistics_built_on_a_hand_built_slope_are_attached(tmp_path: Path) -> None:
    x, y = _data(150, 10)
    formulas = {
        "F2": "_xlfn.COVARIANCE.S(C2:C11,B2:B11)/_xlfn.VAR.S(B2:B11)",
        "F3": "SQRT((DEVSQ(C2:C11)-F2^2*DEVSQ(B2:B11))/(COUNT(B2:B11)-2)/DEVSQ(B2:B11))",
        "F4": "F2/F3",
        "F5": "T.DIST.2T(ABS(F4),COUNT(B2:B11)-2)",
    }
    labels = {"E2": "Slope", "E3": "SE of slope", "E4": "t", "E5": "p-value"}
    _write_columns(tmp_path / "deps.xlsx", x, y, formulas, labels=labels)
    (found,) = _handbuilt(_audit(tmp_path / "deps.xlsx"))
    ols = sm.OLS(y, sm.add_constant(x)).fit()  # outside reference: statsmodels
    cells = {key: value.cell for key, value in found.reported.items()}
    assert cells == {
        "slope": "Plots!F2",
        "se_slope": "Plots!F3",
        "t_slope": "Plots!F4",
        "p_slope": "Plots!F5",
    }
    assert found.reported["se_slope"].as_written == pytest.approx(ols.bse[1], rel=1e-9)
    assert found.reported["p_slope"].as_written == pytest.approx(ols.pvalues[1], rel=1e-7)
    assert {v.verdict for v in found.reported.values()} == {"confirmed"}


def test_a_beta_over_data_the_tool_cannot_recompute_is_judged_from_stored_values(
    tmp_path: Path,
) -> None:
    # Returns come from a function regaudit does not evaluate; the file stores what the author
    # saw (numbers, and "n/a" where a price is missing). The beta's value reproduces the
    # rows-differ computation over those stored values, so its mismatch is evidence.
    x, y = _data(170, 12)
    missing = [3, 9]
    keep = np.array([i not in missing for i in range(12)])
    beta = float(np.cov(x[keep], y[keep], ddof=1)[0, 1] / np.var(x, ddof=1))  # numpy
    path = tmp_path / "stored.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Plots")
    for i in range(12):
        sheet.write_number(i + 1, 1, float(x[i]))
        shown: float | str = "n/a" if i in missing else float(y[i])
        sheet.write_formula(i + 1, 2, f"=_xlfn.NOTEVALUATED({i})", None, shown)
    formula = "=_xlfn.COVARIANCE.S(C2:C13,B2:B13)/_xlfn.VAR.S(B2:B13)"
    sheet.write_formula("F2", formula, None, beta)
    book.close()
    (found,) = _handbuilt(_audit(path))
    assert found.reported["slope"].verdict == "mismatch"
    (finding,) = [f for f in found.findings if f.check == "stat-recompute"]
    assert finding.kind == "rows-differ"
    assert finding.evidence["reproduced"] == pytest.approx(beta, rel=RELATIVE)


@pytest.mark.parametrize(
    ("seed", "function", "x_first", "y_first"),
    [(40, "CORREL", True, False), (41, "PEARSON", False, True), (42, "CORREL", False, False)],
)
def test_r_squared_from_a_correlation_joins_the_handbuilt_slope(
    tmp_path: Path, seed: int, function: str, x_first: bool, y_first: bool
) -> None:
    """CORREL(a, b)^2 says nothing of which range is x: the hand-built slope beside it does.
    One regression, oriented as the slope, holding the R² cell (no second one, reversed)."""
    n = 9 + seed % 4
    x, y = _data(seed, n)
    last = n + 1
    xl, yl = ("C", "B") if y_first else ("B", "C")
    xs, ys = f"{xl}2:{xl}{last}", f"{yl}2:{yl}{last}"
    pair = f"{xs},{ys}" if x_first else f"{ys},{xs}"
    formulas = {
        "F2": f"_xlfn.COVARIANCE.S({xs},{ys})/_xlfn.VAR.S({xs})",
        "F3": f"AVERAGE({ys})-F2*AVERAGE({xs})",
        "F4": f"{function}({pair})^2",
    }
    x_range, y_range = _write_columns(tmp_path / "plots.xlsx", x, y, formulas, y_first)
    result = _audit(tmp_path / "plots.xlsx")
    (found,) = result.regressions
    assert (found.x_range, found.y_range) == (x_range, y_range)
    assert found.found_by == "hand-built"
    assert found.reported["r_squared"].cell == "Plots!F4"
    r = np.corrcoef(x, y)[0, 1]  # outside reference: numpy
    assert found.intended["r_squared"] == pytest.approx(r * r, rel=RELATIVE)
    assert found.reported["slope"].verdict == "confirmed"
