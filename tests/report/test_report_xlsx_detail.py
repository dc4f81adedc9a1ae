"""audit.xlsx of the real fixture audit, read back with openpyxl and from the zip's own XML.

Checks that every regression and finding of audit.json appears; that every link resolves (inside
the workbook, and into the source workbook's existing sheets); that each detail sheet's charts
plot its own snapshot columns; and that the numbers the live formulas are stored with follow from
the snapshot's used points: statsmodels OLS, fitted to the very cells the formulas reference, gives
the same slope, standard errors, t, p, R² and sums of squares. (test_report_xlsx_libreoffice.py
has LibreOffice recalculate the formulas themselves.)
"""

from __future__ import annotations

import io
import math
import re
from pathlib import Path
from typing import Any
from urllib.parse import unquote, urlparse

import numpy as np
import openpyxl
import pytest
import statsmodels.api as sm
from openpyxl.utils.cell import range_boundaries
from openpyxl.worksheet.worksheet import Worksheet
from scipy import stats as scipy_stats
from test_report_xlsx_support import chart_formulas, fixture_audit, split_range, xlsx_bytes

from auditor.model import RegressionResult
from auditor.report.common import design_label, short_paths, stat_label
from auditor.report.json import audit_document
from auditor.report.xlsx.links import detail_refs

RELATIVE = 1e-9
HYPERLINK = re.compile(r'^=HYPERLINK\("(?P<target>[^"]+)","(?P<text>[^"]*)"\)$')


@pytest.fixture(scope="module")
def data() -> bytes:
    return xlsx_bytes(fixture_audit())


@pytest.fixture(scope="module")
def book(data: bytes) -> openpyxl.Workbook:
    return openpyxl.load_workbook(io.BytesIO(data))


@pytest.fixture(scope="module")
def charts(data: bytes) -> dict[str, list[list[str]]]:
    return chart_formulas(data)


@pytest.fixture(scope="module")
def stored(data: bytes) -> openpyxl.Workbook:
    """The same file with the values stored beside the formulas (what a viewer shows)."""
    return openpyxl.load_workbook(io.BytesIO(data), data_only=True)


def _table(sheet: Worksheet) -> list[dict[str, Any]]:
    rows = list(sheet.iter_rows(values_only=True))
    return [dict(zip(rows[0], row, strict=True)) for row in rows[1:]]


def section(sheet: Worksheet, title: str, header_offset: int = 1) -> list[tuple[Any, ...]]:
    """The rows of a detail-sheet section: after its header, up to the first empty row."""
    start = next(c.row for c in sheet["A"] if c.value == title)
    rows = []
    for row in sheet.iter_rows(min_row=start + header_offset + 1, values_only=True):
        if all(value is None for value in row):
            break
        rows.append(row)
    return rows


def close(a: float, b: float) -> bool:
    return abs(a - b) <= RELATIVE * max(abs(a), abs(b)) + 1e-300


def test_every_regression_and_finding_of_the_json_appears(book: openpyxl.Workbook) -> None:
    result = fixture_audit()
    document = audit_document(result)
    shown = short_paths(result)
    regression_rows = {(r["workbook"], r["regression"]) for r in _table(book["Regressions"])}
    finding_rows = [(r["workbook"], r["check"], r["message"]) for r in _table(book["Findings"])]
    expected_findings = []
    for workbook in document["workbooks"]:
        path = shown[workbook["path"]]
        for regression in workbook["regressions"]:
            assert (path, regression["id"]) in regression_rows
            expected_findings += [(path, f["check"], f["message"]) for f in regression["findings"]]
        expected_findings += [(path, f["check"], f["message"]) for f in workbook["findings"]]
    assert len(regression_rows) == document["totals"]["regressions"] > 20
    assert sorted(finding_rows) == sorted(expected_findings)
    assert len(book.sheetnames) == 3 + document["totals"]["regressions"]


def test_findings_are_sorted_most_severe_first(book: openpyxl.Workbook) -> None:
    order = ["critical", "major", "minor", "info"]
    ranks = [order.index(row["severity"]) for row in _table(book["Findings"])]
    assert ranks == sorted(ranks) and ranks[0] == 0


def test_detail_sheet_names_are_short_unique_and_stable(book: openpyxl.Workbook) -> None:
    names = book.sheetnames[3:]
    assert len({name.lower() for name in names}) == len(names)
    assert all(len(name) <= 31 and not re.search(r"[\[\]:*?/\\]", name) for name in names)
    assert names[0].startswith("R01 ") and names == [
        ref.sheet for ref in detail_refs(fixture_audit())
    ]
    for name, ref in zip(names, detail_refs(fixture_audit()), strict=True):
        assert book[name]["A1"].value == f"{name}: regression {ref.regression.id}"


def test_internal_links_open_existing_sheets(book: openpyxl.Workbook) -> None:
    links = 0
    for sheet in book.worksheets:
        for link in (c.hyperlink for row in sheet.iter_rows() for c in row if c.hyperlink):
            target_sheet, _, cell = link.location.rpartition("!")
            assert target_sheet.strip("'").replace("''", "'") in book.sheetnames
            assert cell == "A1"
            links += 1
    # Each regression: Regressions → detail, detail → Regressions; plus the Overview's guide.
    assert links >= 2 * len(book.sheetnames[3:])


def test_source_links_point_at_existing_sheets_of_the_audited_files(
    book: openpyxl.Workbook,
) -> None:
    checked: dict[Path, list[str]] = {}
    count = 0
    for sheet in [book["Regressions"], book["Findings"], *book.worksheets[3:]]:
        for row in sheet.iter_rows():
            for cell in row:
                match = HYPERLINK.match(cell.value) if isinstance(cell.value, str) else None
                if not match:
                    continue
                uri, _, anchor = match["target"].partition("#")
                path = Path(unquote(urlparse(uri).path))
                assert path.is_file(), path
                if path not in checked:
                    checked[path] = openpyxl.load_workbook(path, read_only=True).sheetnames
                source_sheet, _, address = anchor.rpartition("!")
                assert source_sheet[1:-1].replace("''", "'") in checked[path]
                assert re.fullmatch(r"[A-Z]{1,3}\d+", address)
                count += 1
    assert count > 100


def _used_points(sheet: Worksheet, regression: RegressionResult) -> list[tuple[Any, ...]]:
    rows = section(sheet, "Data snapshot", header_offset=2)
    k = regression.x_columns
    assert len(rows) == len(regression.data)
    return [row for row in rows if row[k + 2] == "yes"]


@pytest.mark.parametrize("index", range(len(detail_refs(fixture_audit()))))
def test_charts_plot_this_sheets_snapshot(
    index: int, charts: dict[str, list[list[str]]], stored: openpyxl.Workbook
) -> None:
    ref = detail_refs(fixture_audit())[index]
    sheet = stored[ref.sheet]
    used = _used_points(sheet, ref.regression)
    assert len(charts[ref.sheet]) == 2
    k = ref.regression.x_columns
    for formulas in charts[ref.sheet]:
        for formula in formulas:
            sheet_name, first_col, first_row, last_col, last_row = split_range(formula)
            assert sheet_name == ref.sheet and first_col == last_col

    # Point series plot y against x (one x) or against the fitted value (several): first the
    # points the author's formula saw, then (a series of their own) those it missed.
    def values(formula: str) -> list[Any]:
        return list(_cells(sheet, formula.split("!")[1])[:, 0])

    seen = [row for row in used if row[k + 3] == "yes"]
    missed = [row for row in used if row[k + 3] == "no"]
    groups = [group for group in (seen, missed) if group]
    fit_chart, residual_chart = charts[ref.sheet]
    assert len(fit_chart) == 2 * len(groups) + 2 and len(residual_chart) == 2 * len(groups)
    for index_, group in enumerate(groups):
        x_formula, y_formula = fit_chart[2 * index_ : 2 * index_ + 2]
        assert values(y_formula) == [row[k + 1] for row in group]
        expected_x = [row[1] for row in group] if k == 1 else [row[k + 4] for row in group]
        assert values(x_formula) == pytest.approx(expected_x, rel=RELATIVE)
        residuals = values(residual_chart[2 * index_ + 1])
        assert residuals == pytest.approx([row[k + 5] for row in group], rel=RELATIVE)
    line_x, line_y = fit_chart[-2:]  # the fitted line runs over every used point
    assert sorted(values(line_y)) == pytest.approx(sorted(row[k + 4] for row in used), rel=RELATIVE)
    assert len(values(line_x)) == len(used) == ref.regression.n


def _cells(sheet: Worksheet, reference: str) -> np.ndarray:
    min_col, min_row, max_col, max_row = range_boundaries(reference.replace("$", ""))
    rows = sheet.iter_rows(min_row, max_row, min_col, max_col, values_only=True)
    return np.array([[float(v) for v in row] for row in rows])


def statsmodels_values(y: np.ndarray, x: np.ndarray, intercept: bool) -> dict[str, float]:
    """The statistics by their keys, from statsmodels OLS (the outside reference)."""
    design = sm.add_constant(x, prepend=False) if intercept else x
    fit = sm.OLS(y, design).fit()
    k = x.shape[1]
    values = {
        "n": float(len(y)),
        "df": float(fit.df_resid),
        "residual_sd": math.sqrt(fit.scale),
        "r_squared": fit.rsquared,
        "f": fit.fvalue,
        "ss_regression": fit.ess,
        "ss_residual": fit.ssr,
    }
    for j in range(k):
        suffix = "" if k == 1 else f"[{j + 1}]"
        values[f"slope{suffix}"] = fit.params[j]
        values[f"se_slope{suffix}"] = fit.bse[j]
        values[f"t_slope{suffix}"] = fit.tvalues[j]
        values[f"p_slope{suffix}"] = fit.pvalues[j]
    if intercept:
        values |= {"intercept": fit.params[k], "se_intercept": fit.bse[k]}
        values |= {"t_intercept": fit.tvalues[k], "p_intercept": fit.pvalues[k]}
    if k == 1 and intercept:
        values["r"] = float(np.corrcoef(x[:, 0], y)[0, 1])
    elif k > 1:
        values["r"] = math.sqrt(fit.rsquared)
    return values


@pytest.mark.parametrize("index", range(len(detail_refs(fixture_audit()))))
def test_live_formulas_are_stored_with_what_statsmodels_gives(
    index: int, book: openpyxl.Workbook, stored: openpyxl.Workbook
) -> None:
    ref = detail_refs(fixture_audit())[index]
    regression = ref.regression
    formulas, values = book[ref.sheet], stored[ref.sheet]
    rows = section(formulas, "Recomputed here", header_offset=2)
    if not rows:
        pytest.skip("no used points")
    start = next(c.row for c in formulas["A"] if c.value == "Recomputed here") + 3
    labels = {stat_label(key): key for key in regression.intended}
    # n is COUNT() of the used y values; the used x columns sit just left of them.
    snapshot_y = re.search(r"COUNT\((\$[A-Z]+\$\d+:\$[A-Z]+\$\d+)\)", _all_formulas(formulas))
    assert snapshot_y, "no COUNT over the used y values"
    y_range = snapshot_y.group(1)
    x_range = _x_block(formulas, y_range, regression.x_columns)
    expected = statsmodels_values(
        _cells(formulas, y_range)[:, 0], _cells(formulas, x_range), regression.intercept
    )
    checked = 0
    for offset, row in enumerate(rows):
        key = labels[row[0]]
        live = values.cell(start + offset, 3).value
        assert str(formulas.cell(start + offset, 3).value).startswith("=")
        assert live == pytest.approx(regression.intended[key], rel=RELATIVE, abs=1e-300)
        assert close(live, expected[key]), key
        assert values.cell(start + offset, 4).value == "agrees"
        checked += 1
    assert checked >= 9


def _all_formulas(sheet: Worksheet) -> str:
    return " ".join(
        str(c.value) for row in sheet.iter_rows() for c in row if str(c.value).startswith("=")
    )


def _x_block(sheet: Worksheet, y_range: str, columns: int) -> str:
    """The used x columns sit just left of the used y column."""
    min_col, min_row, _, max_row = range_boundaries(y_range.replace("$", ""))
    first = sheet.cell(min_row, min_col - columns).coordinate
    last = sheet.cell(max_row, min_col - 1).coordinate
    return f"{first}:{last}"


@pytest.mark.parametrize("index", range(len(detail_refs(fixture_audit()))))
def numpy_design(x: np.ndarray, y: np.ndarray, intercept: bool) -> dict[str, float]:
    """Design metrics computed directly with numpy and scipy (the outside reference)."""
    levels, counts = np.unique(x, return_counts=True)
    n = len(x)
    values = {
        "n": n,
        "levels": len(levels),
        "replicated_levels": int((counts > 1).sum()),
        "max_replicates": int(counts.max()),
        "x_min": x.min(),
        "x_max": x.max(),
        "x_mean": x.mean(),
        "x_range": x.max() - x.min(),
    }
    if not intercept:
        return values | {"sxx": float((x**2).sum())}
    deviations = (x - x.mean()) ** 2
    sxx = float(deviations.sum())
    line = scipy_stats.linregress(x, y)
    residuals = y - (line.intercept + line.slope * x)
    return values | {
        "sxx": sxx,
        "max_leverage": float((1 / n + deviations / sxx).max()),
        "max_sxx_share": float(deviations.max() / sxx),
        "residual_sd": math.sqrt(float((residuals**2).sum()) / (n - 2)),
        "df": n - 2,
        "slope": line.slope,
        "p_slope": line.pvalue,
    }


@pytest.mark.parametrize("index", range(len(detail_refs(fixture_audit()))))
def test_design_metrics_are_all_shown_and_numpy_agrees(
    index: int, book: openpyxl.Workbook, stored: openpyxl.Workbook
) -> None:
    ref = detail_refs(fixture_audit())[index]
    regression = ref.regression
    rows = section(stored[ref.sheet], "Design of x")
    assert len(rows) == len(regression.design)
    live = [row for row in rows if row[2] is not None]
    if not live:
        return
    formulas = book[ref.sheet]
    y_range = re.search(r"COUNT\((\$[A-Z]+\$\d+:\$[A-Z]+\$\d+)\)", _all_formulas(formulas))
    assert y_range
    y = _cells(formulas, y_range.group(1))[:, 0]
    x = _cells(formulas, _x_block(formulas, y_range.group(1), regression.x_columns))[:, 0]
    expected = numpy_design(x, y, regression.intercept)
    labels = {design_label(key): key for key in regression.design}
    for row in live:
        key = labels[row[0]]
        # regaudit's value, and the value stored with the live formula, against numpy's.
        assert close(row[1], expected[key]) and close(row[2], expected[key]), key
    assert "n" in {labels[row[0]] for row in live}


def test_statistics_table_shows_the_three_values(stored: openpyxl.Workbook) -> None:
    ref = next(r for r in detail_refs(fixture_audit()) if r.regression.verdict == "mismatch")
    sheet = stored[ref.sheet]
    rows = {row[0]: row for row in section(sheet, "Statistics: reported, as written, intended")}
    for key, reported in ref.regression.reported.items():
        row = rows[stat_label(key)]
        assert row[4] == reported.verdict and row[5] == (reported.tolerance or None)
        assert row[7] == reported.cell  # the link's stored text
        # XlsxWriter writes numbers with 16 significant digits ("%.16g"): 1e-15 relative.
        if isinstance(reported.value, float) and math.isfinite(reported.value):
            assert row[1] == pytest.approx(reported.value, rel=1e-15)
        if reported.as_written is not None and math.isfinite(reported.as_written):
            assert row[2] == pytest.approx(reported.as_written, rel=1e-15)


def test_several_x_columns_get_one_row_per_column(book: openpyxl.Workbook) -> None:
    ref = next(r for r in detail_refs(fixture_audit()) if r.regression.x_columns > 1)
    sheet = book[ref.sheet]
    labels = [row[0] for row in section(sheet, "Statistics: reported, as written, intended")]
    assert {"slope of x1", "slope of x2", "standard error of the slope of x2"} <= set(labels)
    header_row = next(c.row for c in sheet["A"] if c.value == "Data snapshot") + 2
    header = [c.value for c in sheet[header_row]]
    assert header[:4] == ["source row", "x1", "x2", "y"]
    assert "x1 used" in header and "x2 used" in header
    # LINEST lists the coefficients last x first: slope of x1 is column 2 of 2.
    live = {row[0]: row for row in section(sheet, "Recomputed here", header_offset=2)}
    assert str(live["slope of x1"][4]).endswith(",1,2)")
    assert str(live["slope of x2"][4]).endswith(",1,1)")


def test_the_same_result_gives_the_same_bytes(data: bytes) -> None:
    assert xlsx_bytes(fixture_audit()) == data
