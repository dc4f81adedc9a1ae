"""Data laid out in rows (x in one row, y below, one point per column): the table the author
meant, a range stopping short of it, and a total column taken in (auditor/extract/across.py).

Seeded workbooks written with XlsxWriter in an invented scenario (a feed trial: ration in g/day
against weight gain in g, one column per pen). Stored values are what a spreadsheet saves,
computed here by numpy least squares and scipy's t distribution over the cells each formula
reads (outside references, not regaudit). Severity follows the design: critical when the slip
moves p across alpha = 0.05 or flips the slope's sign, major otherwise.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter
from scipy import stats as sps
from xlsxwriter.utility import xl_col_to_name

from auditor.model import Finding, RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy

POLICY = load_policy("general")  # alpha 0.05


def _fit(x: np.ndarray, y: np.ndarray) -> dict[str, float]:
    """SLOPE, INTERCEPT, STEYX/DEVSQ and T.DIST.2T as a spreadsheet stores them."""
    slope, intercept = np.polyfit(x, y, 1)
    resid = y - (slope * x + intercept)
    n = len(x)
    se = math.sqrt(float(resid @ resid) / (n - 2)) / math.sqrt(float(((x - x.mean()) ** 2).sum()))
    p = float(2.0 * sps.t.sf(abs(slope / se), n - 2))
    return {"slope": float(slope), "intercept": float(intercept), "se_slope": se,
            "t_slope": float(slope) / se, "p_slope": p, "df": float(n - 2)}  # fmt: skip


def _decision_changes(shown: dict[str, float], right: dict[str, float]) -> bool:
    flips = (shown["slope"] > 0) != (right["slope"] > 0)
    return flips or (shown["p_slope"] < 0.05) != (right["p_slope"] < 0.05)


def _write(
    path: Path, x: np.ndarray, y: np.ndarray, *, top: int, left: int, short: int, total: bool
) -> tuple[dict[str, float], dict[str, float], str]:
    """The table in rows ``top`` (x) and ``top + 1`` (y) from column ``left + 1``; the formulas
    read all but the last ``short`` columns, plus a SUM column when ``total``. Returns the fit
    the cells show, the intended fit, and the column letter of the total (or "")."""
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Feed Trial")
    n = len(x)
    sheet.write(top, left, "Ration (g/day)")
    sheet.write(top + 1, left, "Weight gain (g)")
    for k in range(n):
        sheet.write_number(top, left + 1 + k, float(x[k]))
        sheet.write_number(top + 1, left + 1 + k, float(y[k]))
    read_x, read_y = x[: n - short], y[: n - short]
    last = left + n - short  # 0-based column of the last cell the formulas read
    total_letter = ""
    if total:
        col = left + 1 + n
        total_letter = xl_col_to_name(col)
        first, end = xl_col_to_name(left + 1), xl_col_to_name(left + n)
        sheet.write(top - 1, col, "Total")
        for row, values in ((top, x), (top + 1, y)):
            sheet.write_formula(
                row, col, f"=SUM({first}{row + 1}:{end}{row + 1})", None, float(values.sum())
            )
        read_x, read_y = np.append(x, x.sum()), np.append(y, y.sum())
        last = col
    xs = f"{xl_col_to_name(left + 1)}{top + 1}:{xl_col_to_name(last)}{top + 1}"
    ys = f"{xl_col_to_name(left + 1)}{top + 2}:{xl_col_to_name(last)}{top + 2}"
    shown = _fit(read_x, read_y)
    block = top + 4
    formulas = {
        "Slope": (f"=SLOPE({ys},{xs})", shown["slope"]),
        "Intercept": (f"=INTERCEPT({ys},{xs})", shown["intercept"]),
        "SE of slope": (f"=STEYX({ys},{xs})/SQRT(DEVSQ({xs}))", shown["se_slope"]),
        "t": (f"=B{block + 1}/B{block + 3}", shown["t_slope"]),
        "df": (f"=COUNT({xs})-2", shown["df"]),
        "p-value": (f"=_xlfn.T.DIST.2T(ABS(B{block + 4}),B{block + 5})", shown["p_slope"]),
    }
    for k, (label, (formula, value)) in enumerate(formulas.items()):
        sheet.write(block + k, 0, label)
        sheet.write_formula(block + k, 1, formula, None, value)
    book.close()
    return shown, _fit(x, y), total_letter


def _the_regression(path: Path) -> RegressionResult:
    result = audit_workbook(path, POLICY)
    assert len(result.regressions) == 1, [r.id for r in result.regressions]
    return result.regressions[0]


def _named(regression: RegressionResult, kind: str) -> list[Finding]:
    return [
        f
        for f in regression.findings
        if f.severity in ("major", "critical") and kind in {f.kind, *f.evidence.get("kinds", [])}
    ]


def _data(seed: int) -> tuple[np.ndarray, np.ndarray, int, int]:
    rng = np.random.default_rng(seed)
    n = int(rng.integers(8, 14))
    x = np.round(np.linspace(40.0, 160.0, n) + rng.normal(0, 1.5, n), 1)
    y = np.round(5.0 + float(rng.uniform(-0.02, 0.08)) * x + rng.normal(0, 2.5, n), 2)
    return x, y, int(rng.integers(1, 6)), int(rng.integers(0, 3))


@pytest.mark.parametrize("seed", range(8))
def test_a_range_short_of_a_table_in_rows_is_named_with_the_columns_left_out(
    tmp_path: Path, seed: int
) -> None:
    x, y, top, left = _data(seed)
    short = 1 + seed % 3
    path = tmp_path / "short.xlsx"
    shown, right, _ = _write(path, x, y, top=top, left=left, short=short, total=False)
    regression = _the_regression(path)
    first, end = xl_col_to_name(left + 1), xl_col_to_name(left + len(x))
    assert regression.intended_x_range == f"Feed Trial!{first}{top + 1}:{end}{top + 1}"
    assert regression.intended["slope"] == pytest.approx(right["slope"], rel=1e-9)
    findings = _named(regression, "range-short")
    assert len(findings) == 1
    left_out = [xl_col_to_name(left + 1 + k) for k in range(len(x) - short, len(x))]
    said = f"column {left_out[0]}" if short == 1 else f"columns {left_out[0]}–{left_out[-1]}"
    assert said in findings[0].message
    assert f"Feed Trial!{first}{top + 2}:{end}{top + 2}" in findings[0].fix
    expected = "critical" if _decision_changes(shown, right) else "major"
    assert findings[0].severity == expected


@pytest.mark.parametrize("seed", range(8))
def test_a_total_column_inside_the_range_is_named_and_left_out(tmp_path: Path, seed: int) -> None:
    x, y, top, left = _data(40 + seed)
    top = max(top, 1)  # the word "Total" sits above the x row
    path = tmp_path / "total.xlsx"
    shown, right, letter = _write(path, x, y, top=top, left=left, short=0, total=True)
    regression = _the_regression(path)
    assert regression.n == len(x)
    assert regression.intended["slope"] == pytest.approx(right["slope"], rel=1e-9)
    findings = _named(regression, "total-row")
    assert len(findings) == 1
    assert f"Feed Trial!{letter}{top + 2}" in findings[0].cells
    before = xl_col_to_name(left + len(x))  # the last data column: the total's left out
    first = xl_col_to_name(left + 1)
    assert f"Feed Trial!{first}{top + 2}:{before}{top + 2}" in findings[0].fix
    expected = "critical" if _decision_changes(shown, right) else "major"
    assert findings[0].severity == expected


def test_a_clean_table_in_rows_with_a_neighbour_to_its_right_is_not_extended(
    tmp_path: Path,
) -> None:
    """Numbers two columns past the table (another block) are not rows added later."""
    x, y, top, left = _data(99)
    path = tmp_path / "clean.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Feed Trial")
    n = len(x)
    for k in range(n):
        sheet.write_number(top, left + 1 + k, float(x[k]))
        sheet.write_number(top + 1, left + 1 + k, float(y[k]))
        sheet.write_number(top, left + 3 + n + k, float(x[k]) + 1.0)  # after one empty column
        sheet.write_number(top + 1, left + 3 + n + k, float(y[k]) * 2.0)
    first, end = xl_col_to_name(left + 1), xl_col_to_name(left + n)
    xs, ys = f"{first}{top + 1}:{end}{top + 1}", f"{first}{top + 2}:{end}{top + 2}"
    right = _fit(x, y)
    sheet.write_formula(top + 4, 1, f"=SLOPE({ys},{xs})", None, right["slope"])
    sheet.write_formula(top + 5, 1, f"=INTERCEPT({ys},{xs})", None, right["intercept"])
    book.close()
    regression = _the_regression(path)
    assert regression.n == n
    assert regression.reported["slope"].verdict == "confirmed"
    assert [f for f in regression.findings if f.severity in ("major", "critical")] == []


@pytest.mark.parametrize("short", [2, 3])
def test_a_range_short_that_hides_the_effect_is_critical(tmp_path: Path, short: int) -> None:
    """Flat readings in the first pens and a rise in the last ones: without the last columns
    the slope is not significant (scipy), with them it is."""
    x = np.array([40.0, 52.5, 65.0, 77.5, 90.0, 102.5, 115.0, 127.5, 140.0, 152.5])
    y = np.array([10.2, 9.1, 10.8, 9.6, 10.5, 9.4, 10.1, 13.9, 15.2, 16.8])
    path = tmp_path / "hidden.xlsx"
    shown, right, _ = _write(path, x, y, top=2, left=0, short=short, total=False)
    assert shown["p_slope"] > 0.05 > right["p_slope"]  # the slip changes the conclusion
    findings = _named(_the_regression(path), "range-short")
    assert [f.severity for f in findings] == ["critical"]
    assert "At alpha = 0.05 this changes the conclusion" in str(findings[0].evidence)


def test_a_number_stored_as_text_in_a_table_in_rows_is_parsed_and_named(tmp_path: Path) -> None:
    """SLOPE skips the pair whose y is the text "12.5"; the intended table reads it as 12.5."""
    x, y, top, left = _data(7)
    k = len(x) // 2
    y[k] = 12.5
    path = tmp_path / "text.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Feed Trial")
    n = len(x)
    for i in range(n):
        sheet.write_number(top, left + 1 + i, float(x[i]))
        if i == k:
            sheet.write_string(top + 1, left + 1 + i, "12.5")
        else:
            sheet.write_number(top + 1, left + 1 + i, float(y[i]))
    first, end = xl_col_to_name(left + 1), xl_col_to_name(left + n)
    xs, ys = f"{first}{top + 1}:{end}{top + 1}", f"{first}{top + 2}:{end}{top + 2}"
    keep = np.arange(n) != k
    shown = _fit(x[keep], y[keep])  # what SLOPE stores: the text pair left out
    sheet.write_formula(top + 4, 1, f"=SLOPE({ys},{xs})", None, shown["slope"])
    sheet.write_formula(top + 5, 1, f"=INTERCEPT({ys},{xs})", None, shown["intercept"])
    book.close()
    regression = _the_regression(path)
    assert regression.n == n
    assert regression.intended["slope"] == pytest.approx(_fit(x, y)["slope"], rel=1e-9)
    assert regression.reported["slope"].as_written == pytest.approx(shown["slope"], rel=1e-9)
    findings = _named(regression, "text-number")
    assert findings and f"Feed Trial!{xl_col_to_name(left + 1 + k)}{top + 2}" in findings[0].cells


def test_two_regressions_side_by_side_in_the_same_rows_keep_their_own_columns(
    tmp_path: Path,
) -> None:
    """Columns that another regression's ranges hold are its data, not columns added later."""
    x, y, top, left = _data(11)
    n = len(x)
    half = n // 2
    path = tmp_path / "halves.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Feed Trial")
    for i in range(n):
        sheet.write_number(top, left + 1 + i, float(x[i]))
        sheet.write_number(top + 1, left + 1 + i, float(y[i]))
    for block, (lo, hi) in enumerate(((0, half), (half, n))):
        first, end = xl_col_to_name(left + 1 + lo), xl_col_to_name(left + hi)
        xs, ys = f"{first}{top + 1}:{end}{top + 1}", f"{first}{top + 2}:{end}{top + 2}"
        fit = _fit(x[lo:hi], y[lo:hi])
        sheet.write_formula(top + 4 + 3 * block, 1, f"=SLOPE({ys},{xs})", None, fit["slope"])
        sheet.write_formula(
            top + 5 + 3 * block, 1, f"=INTERCEPT({ys},{xs})", None, fit["intercept"]
        )
    book.close()
    result = audit_workbook(path, POLICY)
    assert sorted(r.n for r in result.regressions) == sorted([half, n - half])
    for regression in result.regressions:
        assert regression.reported["slope"].verdict == "confirmed"
        assert [f for f in regression.findings if f.severity in ("major", "critical")] == []


def test_columns_of_formulas_copied_across_extend_a_table_in_rows(tmp_path: Path) -> None:
    """x built by one formula copied across (=C3+12.5), y typed: the two columns after the
    range are made like the last one, so the range stops short of the table."""
    x0, step, n, short = 40.0, 12.5, 10, 2
    x = x0 + step * np.arange(n)
    y = np.round(3.0 + 0.05 * x + np.random.default_rng(5).normal(0, 0.4, n), 2)
    path = tmp_path / "copied.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Feed Trial")
    sheet.write_number(2, 1, x0)
    for i in range(1, n):
        prev = f"{xl_col_to_name(i)}3"
        sheet.write_formula(2, 1 + i, f"={prev}+{step}", None, float(x[i]))
    for i in range(n):
        sheet.write_number(3, 1 + i, float(y[i]))
    end = xl_col_to_name(n - short)
    shown = _fit(x[: n - short], y[: n - short])
    sheet.write_formula(6, 1, f"=SLOPE(B4:{end}4,B3:{end}3)", None, shown["slope"])
    book.close()
    regression = _the_regression(path)
    assert regression.n == n
    assert regression.intended_x_range == f"Feed Trial!B3:{xl_col_to_name(n)}3"
    assert _named(regression, "range-short")
