"""Pasted analysis tables: recognised by structure in any language and layout, their data found
by reproduction, every number judged; stale and unsourced tables said so without false alarm.

The tables are written by ``fixtures/pasted_layouts.py`` with numbers from statsmodels OLS (the
outside reference); the tests check that regaudit finds each table at the cells it was written
to, finds the ranges it was computed from, and confirms every number.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
from hypothesis import given, settings
from hypothesis import strategies as st

from auditor.locate.pasted_degrees import solve_df
from auditor.locate.pasted_source import DataIndex, find_source
from auditor.locate.pasted_tables import find_tables
from auditor.model import RegressionResult, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, Sheet, Workbook
from fixtures.pasted_layouts import LABELS, Data, Scene, Table, write_scene

PASTED_CHECKS = ("table-stale", "table-residuals-differ", "stat-recompute")


def _data(rng: np.random.Generator, n: int, k: int, sheet: str, row: int, col: int) -> Data:
    x = rng.uniform(1.0, 40.0, size=(n, k)).round(2)
    y = 3.5 + x @ rng.uniform(-2.0, 2.0, size=k) + rng.normal(0.0, 4.0, size=n)
    names = ["Yield"] + [f"Factor {j}" for j in range(1, k + 1)]
    return Data(sheet, row, col, names, np.column_stack([y.round(3), x]))


def _audit(scene: Scene, tmp_path: Path, name: str = "scene.xlsx") -> WorkbookResult:
    path = tmp_path / name
    write_scene(scene, path)
    return audit_workbook(path, load_policy("general"))


def _for(result: WorkbookResult, table: Table) -> RegressionResult:
    cells = set(table.placed.values())
    found = [r for r in result.regressions if {v.cell for v in r.reported.values()} & cells]
    assert len(found) == 1, [r.id for r in result.regressions]
    return found[0]


def _assert_reproduced(regression: RegressionResult, table: Table) -> None:
    data = table.data
    assert regression.found_by == "pasted-table"
    assert regression.y_range == data.ref(table.y_index)
    assert regression.x_range == data.ref(table.x_first, table.k)
    placed = {key: cell for key, cell in table.placed.items() if key != "residual_first"}
    assert {key: v.cell for key, v in regression.reported.items()} == placed
    wrong = {k: (v.value, v.intended) for k, v in regression.reported.items()
             if v.verdict != "confirmed"}  # fmt: skip
    assert wrong == {}
    reference = table.fit()  # statsmodels
    slope_key = "slope" if table.k == 1 else "slope[1]"
    assert regression.intended[slope_key] == pytest.approx(
        reference.params[1 if table.intercept else 0], rel=1e-9
    )
    assert not [f for f in regression.findings if f.check in PASTED_CHECKS]


def test_one_x_beside_its_data_with_residual_and_probability_output(tmp_path: Path) -> None:
    rng = np.random.default_rng(11)
    data = _data(rng, 15, 1, "Orchard", 2, 1)
    table = Table("Orchard", 1, 5, data, residuals=True, probability=True)
    result = _audit(Scene([data], [table]), tmp_path)
    regression = _for(result, table)
    _assert_reproduced(regression, table)
    assert regression.n == 15
    assert regression.reported["f_p"].source == "pasted"
    assert regression.reported["f_p"].tolerance == "the same to 7 significant digits"


def test_grid_of_blocks_on_log_columns_of_another_sheet(tmp_path: Path) -> None:
    """Six one-x tables in a 3×2 grid, each over a log-transformed column (formulas with stored
    values) of a data sheet: each table belongs to its own column, not to its neighbours'."""
    rng = np.random.default_rng(5)
    n = 30
    raw = rng.uniform(2.0, 900.0, size=(n, 6))
    logs = np.log(raw)
    y = 1.2 + logs @ rng.uniform(-0.3, 0.3, size=6) + rng.normal(0, 0.4, size=n)
    values = np.column_stack([y] + [v for j in range(6) for v in (raw[:, j], logs[:, j])])
    names = ["Crates"] + [name for j in range(6) for name in (f"Plot {j}", f"Plot {j} log")]
    data = Data("Transformed", 0, 0, names, values, log_columns=tuple(range(2, 13, 2)))
    tables = [Table("Grid", 20 * (j // 3), 11 * (j % 3), data, x_first=2 + 2 * j) for j in range(6)]
    result = _audit(Scene([data], tables), tmp_path)
    for table in tables:
        _assert_reproduced(_for(result, table), table)


def test_several_x_in_rows_with_labels_in_another_language(tmp_path: Path) -> None:
    rng = np.random.default_rng(8)
    base = _data(rng, 12, 3, "Rows", 3, 2)
    data = Data("Rows", 3, 2, base.names, base.values, by_rows=True)
    table = Table("Output", 4, 2, data, k=3, language="vi", second_level=0.99)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    _assert_reproduced(regression, table)
    assert regression.x_columns == 3
    assert "ci_slope_low[2]@99%" in regression.reported


@pytest.mark.parametrize("seed", range(8))
def test_generated_variety(seed: int, tmp_path: Path) -> None:
    """Seeded scenes: one to four x, data on the table's sheet or another, columns or rows, offset
    blocks, decoy columns, any of six label languages, with or without residual output."""
    rng = np.random.default_rng(100 + seed)
    k = int(rng.integers(1, 5))
    n = int(rng.integers(k + 6, 60))
    on_own_sheet = bool(rng.integers(0, 2))
    sheet = "Measures" if on_own_sheet else "Report"
    by_rows = bool(rng.integers(0, 2)) and n < 40
    base = _data(rng, n, k + 1, sheet, int(rng.integers(0, 6)), int(rng.integers(0, 4)))
    data = Data(sheet, base.row, base.col, base.names, base.values, by_rows=by_rows)
    language = sorted(LABELS)[int(rng.integers(0, len(LABELS)))]
    x_first = int(rng.integers(1, 3))  # the block's other column is a decoy of the same length
    table_col = 0 if on_own_sheet else (base.col + n + 3 if by_rows else base.col + k + 5)
    table = Table(
        "Report",
        int(rng.integers(0, 5)),
        table_col,
        data,
        x_first=x_first,
        k=k,
        language=language,
        residuals=bool(rng.integers(0, 2)) and not by_rows,
        second_level=[None, 0.95, 0.9][int(rng.integers(0, 3))],
    )
    _assert_reproduced(_for(_audit(Scene([data], [table]), tmp_path), table), table)


def test_through_the_origin(tmp_path: Path) -> None:
    rng = np.random.default_rng(21)
    data = _data(rng, 18, 1, "Data", 0, 0)
    table = Table("Fit", 0, 0, data, intercept=False)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert regression.intercept is False
    assert regression.reported["slope"].verdict == "confirmed"
    assert regression.reported["r_squared"].verdict == "confirmed"  # uncentred, as statsmodels
    assert regression.reported["adj_r_squared"].verdict == "unverifiable"


def test_stale_table_named_data_changed(tmp_path: Path) -> None:
    """The data were corrected after the table was pasted: the named columns are found, the
    table is stale, one finding says so, and stat-recompute stays silent."""
    rng = np.random.default_rng(3)
    data = _data(rng, 20, 1, "Readings", 0, 0)
    changed = data.values.copy()
    changed[4, 0] += 9.0
    changed[11, 0] -= 6.5
    data.stored = changed
    table = Table("Summary", 0, 0, data, residuals=True)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert regression.y_range == data.ref(0)
    assert regression.reported["slope"].verdict == "mismatch"
    stale = [f for f in regression.findings if f.check == "table-stale"]
    assert len(stale) == 1 and stale[0].severity in ("major", "critical")
    assert "18 of the 20 values" in stale[0].message
    assert not [f for f in regression.findings if f.check == "stat-recompute"]


def test_stale_table_whose_x_changed_found_by_total_and_names(tmp_path: Path) -> None:
    """No residual output: y still has the table's SST, and the x column the table names sits
    beside it; two x readings changed since, so the table is stale."""
    rng = np.random.default_rng(12)
    data = _data(rng, 22, 1, "Readings", 1, 2)
    changed = data.values.copy()
    changed[[2, 15], 1] += [4.0, -3.0]
    data.stored = changed
    table = Table("Summary", 0, 0, data)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert (regression.x_range, regression.y_range) == (data.ref(1), data.ref(0))
    stale = [f for f in regression.findings if f.check == "table-stale"]
    assert len(stale) == 1
    assert "total sum of squares" in stale[0].message


def test_table_without_its_data_is_listed_unverifiable_without_alarm(tmp_path: Path) -> None:
    rng = np.random.default_rng(4)
    data = _data(rng, 25, 2, "Gone", 0, 0)
    table = Table("Kept", 2, 1, data, k=2, language="de")
    scene = Scene([], [table])
    table.fit()  # the table is computed from data the workbook no longer holds
    result = _audit(scene, tmp_path)
    regression = _for(result, table)
    assert regression.found_by == "pasted-table"
    assert {v.verdict for v in regression.reported.values()} == {"unverifiable"}
    assert all("no source found" in v.note for v in regression.reported.values())
    assert [f.check for f in regression.findings] == ["table-source-missing"]
    assert all(f.severity in ("info", "minor") for f in result.all_findings())


def test_edited_residual_is_flagged(tmp_path: Path) -> None:
    rng = np.random.default_rng(9)
    data = _data(rng, 10, 1, "Data", 0, 0)
    table = Table("Fit", 0, 4, data, residuals=True, edited_residual=1.5)
    result = _audit(Scene([data], [table]), tmp_path)
    found = [f for r in result.regressions for f in r.findings]
    differ = [f for f in found if f.check == "table-residuals-differ"]
    assert len(differ) == 1 and differ[0].cells == [table.placed["residual_first"]]


def test_recognition_is_exact_and_needs_no_words(tmp_path: Path) -> None:
    """The same table in every language is recognised at the same cells with the same n, k."""
    rng = np.random.default_rng(2)
    data = _data(rng, 14, 2, "Data", 0, 0)
    tables = [
        Table(f"T {language}", 0, 0, data, k=2, language=language) for language in sorted(LABELS)
    ]
    path = tmp_path / "languages.xlsx"
    write_scene(Scene([data], tables), path)
    found = find_tables(read_workbook(path))
    assert len(found) == len(LABELS)
    for table, recognised in zip(tables, sorted(found, key=lambda t: t.sheet), strict=True):
        assert (recognised.n, recognised.k, recognised.df) == (14, 2, 11)
        placed = {k: v for k, v in table.placed.items() if k != "residual_first"}
        assert {k: c.address for k, c in recognised.cells.items()} == placed


def test_solve_df_inverts_the_t_distribution() -> None:
    # t = 2.228 with 10 df gives p = 0.05 two-sided (handbook t table, from memory).
    from scipy import stats

    p = float(2 * stats.t.sf(2.228, 10))
    assert solve_df(2.228, p) == 10
    assert solve_df(0.0, 1.0) is None


def test_coefficients_match_statsmodels_reference(tmp_path: Path) -> None:
    """The intended fit of a found table equals statsmodels OLS on the same cells."""
    rng = np.random.default_rng(31)
    data = _data(rng, 40, 3, "Data", 1, 1)
    table = Table("Out", 0, 0, data, k=3)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    values = data.values
    reference = sm.OLS(values[:, 0], sm.add_constant(values[:, 1:4])).fit()
    for j in range(3):
        assert regression.intended[f"slope[{j + 1}]"] == pytest.approx(
            reference.params[j + 1], rel=1e-10
        )
        assert regression.intended[f"se_slope[{j + 1}]"] == pytest.approx(
            reference.bse[j + 1], rel=1e-10
        )
    assert math.isclose(regression.intended["r_squared"], reference.rsquared, rel_tol=1e-12)


def test_sparse_sheets_go_cell_by_cell_with_the_same_result(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Above the dense-copy limit (a sheet with a far-away cell), recognition and the data
    index go cell by cell; both paths give the same tables and the same source."""
    from auditor.locate import pasted_anchors, pasted_data, pasted_source

    rng = np.random.default_rng(17)
    data = _data(rng, 16, 2, "Data", 0, 0)
    table = Table("Out", 0, 0, data, k=2, residuals=True)
    path = tmp_path / "sparse.xlsx"
    write_scene(Scene([data], [table]), path)
    workbook = read_workbook(path)
    dense = [(t.anchor.address, t.n, t.k) for t in find_tables(workbook)]
    dense_runs = {
        (r.sheet, r.by_rows, r.line, r.start, tuple(r.values))
        for r in pasted_source.DataIndex.build(workbook, find_tables(workbook)).runs
    }
    monkeypatch.setattr(pasted_anchors, "MAX_DENSE_CELLS", 0)
    monkeypatch.setattr(pasted_data, "MAX_DENSE_CELLS", 0)
    tables = find_tables(workbook)
    assert [(t.anchor.address, t.n, t.k) for t in tables] == dense
    sparse_runs = {
        (r.sheet, r.by_rows, r.line, r.start, tuple(r.values))
        for r in pasted_source.DataIndex.build(workbook, tables).runs
    }
    assert sparse_runs == dense_runs
    source = pasted_source.find_source(
        workbook, tables[0], pasted_source.DataIndex.build(workbook, tables)
    )
    assert (source.status, source.x and source.x.address) == ("reproduced", data.ref(1, 2))


def test_stale_table_found_by_the_names_it_uses(tmp_path: Path) -> None:
    """Most y values changed (the residual output no longer matches half of them): the columns
    headed by the table's own names (x labels, the y in the residual header) are its data."""
    rng = np.random.default_rng(13)
    data = _data(rng, 20, 1, "Readings", 0, 0)
    changed = data.values.copy()
    changed[:12, 0] += 5.0
    data.stored = changed
    table = Table("Summary", 0, 0, data, residuals=True)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert (regression.x_range, regression.y_range) == (data.ref(1), data.ref(0))
    stale = [f for f in regression.findings if f.check == "table-stale"]
    assert len(stale) == 1 and "the columns the table names (Yield, Factor 1)" in stale[0].message


def test_a_formula_regression_beside_a_pasted_table_borrows_none_of_its_numbers(
    tmp_path: Path,
) -> None:
    """A SLOPE formula next to a pasted table over the same data: the table's R² and standard
    error of the regression stay with the table (not read as the formula's R² and slope SE)."""
    rng = np.random.default_rng(23)
    data = _data(rng, 20, 1, "Bench", 0, 0)
    table = Table("Bench", 0, 4, data)
    slope = float(table.fit().params[1])
    extra = [("Bench", "C2", "Slope", None), ("Bench", "D2", "=SLOPE(A2:A21,B2:B21)", slope)]
    result = _audit(Scene([data], [table], extra), tmp_path)
    by_formula = [r for r in result.regressions if r.found_by == "formulas"]
    assert len(by_formula) == 1
    assert {v.cell for v in by_formula[0].reported.values()} == {"Bench!D2"}
    _assert_reproduced(_for(result, table), table)


@pytest.mark.parametrize("residuals", [True, False])
def test_a_slope_typed_over_is_a_mismatch_not_a_stale_table(
    residuals: bool, tmp_path: Path
) -> None:
    """Only the pasted slope was typed over (its row no longer satisfies t = b / SE): the table
    is still recognised, its data found (by the residual output row by row, or by the numbers
    that still agree), nothing is called stale, and the slope itself is flagged."""
    rng = np.random.default_rng(29)
    data = _data(rng, 12, 1, "Data", 0, 0)
    table = Table("Fit", 0, 4, data, residuals=residuals, edits={"slope": 0.25})
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert (regression.x_range, regression.y_range) == (data.ref(1), data.ref(0))
    assert regression.reported["slope"].verdict == "mismatch"
    assert regression.reported["se_slope"].verdict == "confirmed"
    assert not [f for f in regression.findings if f.check == "table-stale"]
    flagged = {c for f in regression.findings if f.check == "stat-recompute" for c in f.cells}
    assert table.placed["slope"] in flagged


def test_numbers_typed_over_in_the_statistics_and_variance_blocks_are_flagged(
    tmp_path: Path,
) -> None:
    """R² and the regression SS typed over: their blocks no longer satisfy their identities, but
    the df column and the observation count (fixed by the coefficients) still place them, so the
    two cells are compared and flagged; the rest of the table is confirmed."""
    rng = np.random.default_rng(37)
    data = _data(rng, 18, 1, "Data", 0, 0)
    table = Table("Fit", 0, 4, data, edits={"r_squared": 0.05, "ss_regression": 10.0})
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert (regression.x_range, regression.y_range) == (data.ref(1), data.ref(0))
    wrong = {key for key, v in regression.reported.items() if v.verdict == "mismatch"}
    assert wrong == {"r_squared", "ss_regression"}
    assert set(regression.reported) == set(table.placed)


_CELL_VALUES = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False, width=64),
    st.integers(min_value=-5, max_value=60),
    st.sampled_from([0.0, 1.0, 0.05, 0.5, 1e-300]),
    st.text(max_size=4),
)


@settings(max_examples=150, deadline=None)
@given(st.dictionaries(st.tuples(st.integers(1, 12), st.integers(1, 10)), _CELL_VALUES))
def test_recognition_and_search_never_fail_on_arbitrary_grids(
    cells: dict[tuple[int, int], float | int | str],
) -> None:
    """Property (hypothesis): any grid of numbers and text is read without an exception, and
    whatever is recognised is searched for without one."""
    sheet = Sheet("Grid")
    for (r, c), value in cells.items():
        sheet.cells[(r, c)] = Cell("Grid", r, c, value)
    workbook = Workbook("grid.xlsx", "", {"Grid": sheet}, [], True)
    tables = find_tables(workbook)
    index = DataIndex.build(workbook, tables)
    for table in tables:
        assert find_source(workbook, table, index).status in ("reproduced", "stale", "none")


def test_a_column_of_fitted_values_is_not_taken_for_y(tmp_path: Path) -> None:
    """Only the coefficients table was kept, and a column of fitted values (typed as numbers)
    lies beside the data: regressed on the x columns it gives the same coefficients, but
    standard errors of 0, so the real y is found."""
    rng = np.random.default_rng(41)
    base = _data(rng, 15, 2, "Data", 0, 0)
    reference = sm.OLS(base.values[:, 0], sm.add_constant(base.values[:, 1:])).fit()
    values = np.column_stack([np.asarray(reference.fittedvalues), base.values])
    data = Data("Data", 0, 0, ["Fitted", "Yield", "Factor 1", "Factor 2"], values)
    table = Table("Fit", 0, 0, data, y_index=1, x_first=2, k=2, coefficients_only=True)
    regression = _for(_audit(Scene([data], [table]), tmp_path), table)
    assert (regression.x_range, regression.y_range) == (data.ref(2, 2), data.ref(1))


def test_a_chart_of_the_same_data_joins_the_table_regression(tmp_path: Path) -> None:
    """A scatter chart with a linear trendline over the data a pasted table reproduces: one
    regression (the table's), shown two ways, not two."""
    rng = np.random.default_rng(43)
    data = _data(rng, 14, 1, "Data", 0, 0)
    table = Table("Fit", 0, 0, data)
    result = _audit(Scene([data], [table], charts=[(data, 0, 1)]), tmp_path)
    assert len(result.regressions) == 1
    _assert_reproduced(result.regressions[0], table)
