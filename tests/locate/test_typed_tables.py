"""Typed statistic tables: found by their structure and words, their data by reproduction, by
one changed reading, or by words and place; a stale table named once, without false alarm.

The workbooks are written by ``fixtures/typed_layouts.py`` with figures from scipy's
``linregress`` (outside reference); the recomputed values are checked against numpy's own
least squares here (``np.polyfit``), never against regaudit's fit.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from auditor.locate.typed_fit import single_reading
from auditor.locate.typed_record import TypedTable
from auditor.locate.typed_tables import find_typed_tables
from auditor.model import Finding, RegressionResult, WorkbookResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, Sheet, Workbook
from fixtures.typed_layouts import WORDINGS, Data, Scene, Typed, figures, write_scene

QUANTITIES = [  # x, y, x design, slope, intercept, noise (invented)
    ("Flow (L/s)", "Turbidity (NTU)", (2.0, 40.0), 0.21, 1.4, 0.9),
    ("Rainfall (mm)", "Inflow (ML/d)", (0.0, 55.0), 1.7, 22.0, 9.0),
    ("Water temperature (°C)", "Dissolved oxygen (mg/L)", (4.0, 26.0), -0.19, 12.6, 0.45),
    ("Stage (m)", "Discharge (m³/s)", (0.2, 3.5), 4.2, -0.6, 0.5),
]


def _data(rng: np.random.Generator, sheet: str, row: int, col: int, by_rows: bool) -> Data:
    x_name, y_name, (low, high), slope, intercept, noise = QUANTITIES[
        int(rng.integers(len(QUANTITIES)))
    ]
    n = int(rng.integers(8, 15))
    x = np.sort(rng.uniform(low, high, n)).round(2)
    y = (intercept + slope * x + rng.normal(0.0, noise, n)).round(3)
    return Data(sheet, row, col, x_name, y_name, x, y, by_rows, bool(rng.integers(2)))


def _beside(rng: np.random.Generator, by_rows: bool, sheet: str = "Gauge") -> tuple[Data, int, int]:
    """Data and the (row, col) of a typed table right beside it (two empty lines apart)."""
    data = _data(rng, sheet, 1, 1, by_rows)
    if by_rows:
        return data, data.row, data.col + len(data.x) + 3
    return data, data.row + 1, data.first + 3


def _audit(scene: Scene, tmp_path: Path, name: str = "typed.xlsx") -> WorkbookResult:
    path = tmp_path / name
    write_scene(scene, path)
    result = audit_workbook(path, load_policy("general"))
    assert result.status == "audited", result.error
    return result


def _for(result: WorkbookResult, typed: Typed) -> RegressionResult:
    found = [
        r for r in result.regressions if r.reported.get("slope") and
        r.reported["slope"].cell == typed.placed["slope"]
    ]  # fmt: skip
    assert len(found) == 1, [r.id for r in result.regressions]
    return found[0]


def _numpy_fit(x: np.ndarray, y: np.ndarray) -> tuple[float, float]:
    slope, intercept = np.polyfit(x, y, 1)
    return float(slope), float(intercept)


def _serious(regression: RegressionResult) -> list[Finding]:
    return [f for f in regression.findings if f.severity in ("major", "critical")]


def _older_reading(rng: np.random.Generator, data: Data, shift: float = 6.0) -> dict[int, float]:
    slope, intercept = _numpy_fit(data.x, data.y)
    spread = float(np.std(data.y - (intercept + slope * data.x), ddof=2)) or 1.0
    index = int(rng.integers(len(data.x)))
    return {index: float(data.y[index] + float(rng.choice([-1, 1])) * shift * spread)}


def _decision_changes(shown: dict[str, float], now: dict[str, float]) -> bool:
    return (shown["p_slope"] < 0.05) != (now["p_slope"] < 0.05) or (
        shown["slope"] * now["slope"] < 0
    )


CASES = [(seed, by_rows) for seed in range(6) for by_rows in (False, True)]


@pytest.mark.parametrize(("seed", "by_rows"), CASES)
def test_fresh_typed_tables_are_found_over_their_data_and_confirmed(
    seed: int, by_rows: bool, tmp_path: Path
) -> None:
    rng = np.random.default_rng(100 + seed)
    data, row, col = _beside(rng, by_rows)
    wording = list(WORDINGS)[seed % len(WORDINGS)]
    typed = Typed(data, data.sheet, row, col, wording, digits=None if seed % 2 else 4)
    result = _audit(Scene([data], [typed]), tmp_path)
    regression = _for(result, typed)
    assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
    slope, intercept = _numpy_fit(data.x, data.y)
    assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
    assert regression.intended["intercept"] == pytest.approx(intercept, rel=1e-9, abs=1e-9)
    assert {k: v.verdict for k, v in regression.reported.items()} == dict.fromkeys(
        typed.roles, "confirmed"
    )
    assert not [f for f in regression.findings if f.check in ("typed-stale", "stat-recompute")]


@pytest.mark.parametrize(("seed", "by_rows"), CASES)
def test_a_stale_typed_table_names_the_reading_that_changed(
    seed: int, by_rows: bool, tmp_path: Path
) -> None:
    rng = np.random.default_rng(200 + seed)
    data, row, col = _beside(rng, by_rows)
    older = _older_reading(rng, data)
    wording = list(WORDINGS)[seed % len(WORDINGS)]
    typed = Typed(data, data.sheet, row, col, wording, digits=4 if seed % 2 else None, older=older)
    result = _audit(Scene([data], [typed]), tmp_path)
    regression = _for(result, typed)
    assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
    slope, _ = _numpy_fit(data.x, data.y)
    assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
    findings = [f for f in regression.findings if f.check == "typed-stale"]
    assert len(findings) == 1
    finding = findings[0]
    assert finding.kind == "stale-value"
    changes = _decision_changes(typed.shown(), figures(data.x, data.y))
    assert finding.severity == ("critical" if changes else "major")
    ((index, then),) = older.items()
    assert data.cell_of_y(index) in finding.message
    reading = finding.evidence["changed_reading"]
    assert isinstance(reading, dict)
    assert reading["now"] == pytest.approx(data.y[index])
    moved = abs(then - data.y[index])
    assert abs(reading["then"] - then) <= 0.02 * moved
    assert typed.placed["slope"] in finding.cells
    # one finding for the table: the typed figures draw no second alarm each
    assert not [f for f in regression.findings if f.check == "stat-recompute"]


@pytest.mark.parametrize("seed", range(4))
def test_a_small_correction_is_named_too(seed: int, tmp_path: Path) -> None:
    """One reading moved by 1.5 residual SDs: the slope the data give is within a few per cent
    of the typed one, which a lone "Slope" label would take as a copy; the table is stale."""
    rng = np.random.default_rng(300 + seed)
    data, row, col = _beside(rng, bool(seed % 2))
    typed = Typed(data, data.sheet, row, col, "plain", 4 if seed < 2 else None,
                  older=_older_reading(rng, data, shift=1.5))  # fmt: skip
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    ((index, _),) = typed.older.items()
    assert data.cell_of_y(index) in finding.message
    assert finding.kind == "stale-value"


@pytest.mark.parametrize(("seed", "digits"), [(0, 4), (1, 4), (2, 4), (2, 3)])
def test_a_calibration_in_duplicate_names_the_level_that_changed(
    seed: int, digits: int, tmp_path: Path
) -> None:
    """Standards in duplicate with calibration-quality scatter (R² shown as 1): the standard
    error is shown to more digits than the slope allows, and either replicate of the top level
    reproduces the figures: the level is named with both cells."""
    rng = np.random.default_rng(400 + seed)
    levels = np.array([5.0, 10.0, 25.0, 50.0, 100.0, 200.0])
    x = np.repeat(levels, 2)
    y = (130.0 + 48.0 * x + rng.normal(0.0, 4.0, len(x))).round(3)
    data = Data("Standards", 1, 1, "Standard (µg/L)", "Peak area (counts)", x, y)
    typed = Typed(data, "Standards", 2, 4, "plain", digits, older={11: float(y[11] + 25.0)})
    assert typed.shown()["r_squared"] == 1.0  # so few digits cannot tell it from 1
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity == "major"
    replicate = f"{data.cell_of_y(10)} (or its replicate {data.cell_of_y(11).split('!')[1]}"
    assert f"reading in {data.cell_of_y(11)} at" in finding.message or replicate in finding.message
    reading = finding.evidence["changed_reading"]
    assert isinstance(reading, dict)
    assert abs(reading["then"] - reading["now"] - 25.0) < 0.5


def test_figures_typed_before_rows_were_added_are_stale(tmp_path: Path) -> None:
    """The first ten of twelve rows reproduce the figures: the table is found over them, and
    the full table (intended) no longer gives them: one finding of kind stale-value."""
    rng = np.random.default_rng(8)
    x = np.sort(rng.uniform(2.0, 40.0, 12)).round(2)
    y = (1.4 + 0.21 * x + rng.normal(0.0, 0.9, 12)).round(3)
    full = Data("Intake", 1, 1, "Flow (L/s)", "Turbidity (NTU)", x, y)
    first = Data("Intake", 1, 1, "Flow (L/s)", "Turbidity (NTU)", x[:10], y[:10])
    typed = Typed(first, "Intake", 2, 4, "plain", 4)
    regression = _for(_audit(Scene([full], [typed]), tmp_path), typed)
    assert (regression.x_range, regression.intended_x_range) == (first.ref(0), full.ref(0))
    slope, _ = _numpy_fit(x, y)
    assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
    assert [f.kind for f in _serious(regression) if f.kind == "stale-value"] == ["stale-value"]


def test_a_stale_figure_that_flips_significance_is_critical(tmp_path: Path) -> None:
    x = np.arange(1.0, 11.0)
    y = np.array([5.1, 4.8, 5.5, 5.0, 5.4, 5.8, 5.1, 5.7, 5.5, 5.9])
    data = Data("Gauge", 1, 1, "Flow (L/s)", "Turbidity (NTU)", x, y)
    typed = Typed(data, "Gauge", 2, 4, "units", digits=4, older={9: 5.0})
    shown, now = typed.shown(), figures(x, y)
    assert now["p_slope"] < 0.05 < shown["p_slope"]  # the precondition, from scipy
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity == "critical"
    assert "Gauge!C12" in finding.message


def _summary(
    sites: list[Data], older: dict[int, dict[int, float]], title: str, spacing: int = 1
) -> list[Typed]:
    """One summary column per site on the sheet "Summary" (labels in column A beside the first),
    titled ``title.format(k=site number, y=y quantity)``, ``spacing`` columns apart."""
    return [
        Typed(
            data,
            "Summary",
            2,
            spacing * k + 1 if k else 0,
            "plain",
            4,
            older=older.get(k, {}),
            labels=k == 0,
            title=title.format(k=k + 1, y=data.y_name.split(" (")[0].lower()),
        )  # fmt: skip
        for k, data in enumerate(sites)
    ]


@pytest.mark.parametrize("by_rows", [False, True])
def test_summary_sheet_columns_are_linked_to_their_sites(by_rows: bool, tmp_path: Path) -> None:
    rng = np.random.default_rng(7 if by_rows else 8)
    sites = [_data(rng, f"Site {k}", 1, 1, by_rows) for k in (1, 2, 3)]
    typed = _summary(sites, {1: _older_reading(rng, sites[1])}, "Site {k} — {y} vs flow")
    result = _audit(Scene(sites, typed, [("Summary", 0, 0, "Figures typed from the report")]),
                    tmp_path)  # fmt: skip
    for k, (data, table) in enumerate(zip(sites, typed, strict=True)):
        regression = _for(result, table)
        assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
        stale = [f for f in regression.findings if f.check == "typed-stale"]
        assert len(stale) == (1 if k == 1 else 0)
        if k != 1:
            assert all(v.verdict == "confirmed" for v in regression.reported.values())


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_summary_rows_one_per_site_with_p_as_a_claim(seed: int, tmp_path: Path) -> None:
    """Labels along a row, one row of figures per site below them, the site's name on its left;
    p written as text ("<0.001", "0.031"); df shown in some tables."""
    rng = np.random.default_rng(60 + seed)
    sites = [_data(rng, f"Site {k}", 1, 1, bool(k % 2)) for k in (1, 2, 3)]
    roles = ("slope", "intercept", "se_slope", "t_slope", "p_slope", "r_squared", "df")
    typed = []
    for k, data in enumerate(sites):
        older = _older_reading(rng, data) if k == seed else {}
        typed.append(
            Typed(
                data,
                "Summary",
                3 + k,
                1,
                list(WORDINGS)[(seed + k) % 4],
                4,
                roles[: 7 - seed % 2],
                older,
                f"Site {k + 1}",
                labels=k == 0,
                across=True,
                p_text=True,
            )  # fmt: skip
        )
    result = _audit(Scene(sites, typed), tmp_path)
    for k, (data, table) in enumerate(zip(sites, typed, strict=True)):
        regression = _for(result, table)
        assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
        assert regression.reported["p_slope"].cell == table.placed["p_slope"]
        assert regression.reported["p_slope"].source == "text"
        stale = [f for f in regression.findings if f.check == "typed-stale"]
        assert len(stale) == (1 if k == seed else 0)
        if k == seed:
            ((index, _),) = table.older.items()
            assert data.cell_of_y(index) in stale[0].message
        else:
            assert {v.verdict for v in regression.reported.values()} == {"confirmed"}


def test_n_shown_gives_the_degrees_of_freedom() -> None:
    rng = np.random.default_rng(12)
    x = rng.uniform(0, 10, 11)
    y = 2.0 + 0.8 * x + rng.normal(0, 2.0, 11)
    shown = figures(x, y)
    del shown["df"], shown["r_squared"]
    shown["n"] = 11.0
    (table,) = _consistent_tables(_table(shown, 4))
    assert table.df_options == (9,)
    assert "p = two-sided p of t on df" in table.relations
    shown["n"] = 30.0  # a p that does not follow from t on 28 degrees of freedom
    assert _consistent_tables(_table(shown, 4)) == []


def _two_readings(data: Data) -> dict[int, float]:
    slope, intercept = _numpy_fit(data.x, data.y)
    spread = float(np.std(data.y - (intercept + slope * data.x), ddof=2)) or 1.0
    return {0: float(data.y[0] + 5 * spread), len(data.x) - 1: float(data.y[-1] - 4 * spread)}


def test_words_and_place_link_a_table_no_single_reading_explains(tmp_path: Path) -> None:
    rng = np.random.default_rng(31)
    data, row, col = _beside(rng, False)
    typed = Typed(data, data.sheet, row, col, "units", 4, older=_two_readings(data))
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity in ("major", "critical")
    assert finding.evidence["link"] == "words and place"
    assert "changed_reading" not in finding.evidence
    x_unit = data.x_name.rpartition("(")[2].rstrip(")").lower()
    assert x_unit in finding.evidence["words_matched"]  # type: ignore[operator]


@pytest.mark.parametrize("by_rows", [False, True])
def test_the_words_say_which_line_is_x(by_rows: bool, tmp_path: Path) -> None:
    """y written before x: "Slope (NTU per L/s)" names y's unit before "per" and x's after, so
    a table no single reading explains is still read as y on x."""
    rng = np.random.default_rng(51)
    data, row, col = _beside(rng, by_rows)
    data.y_first = True
    typed = Typed(data, data.sheet, row, col, "units", 4, older=_two_readings(data))
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
    slope, _ = _numpy_fit(data.x, data.y)
    assert regression.intended["slope"] == pytest.approx(slope, rel=1e-9)
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity in ("major", "critical")


def test_summary_columns_with_spacers_between_sites(tmp_path: Path) -> None:
    rng = np.random.default_rng(90)
    sites = [_data(rng, f"Site {k}", 1, 1, False) for k in (1, 2, 3)]
    typed = _summary(sites, {}, "Site {k}", spacing=2)
    result = _audit(Scene(sites, typed), tmp_path)
    for data, table in zip(sites, typed, strict=True):
        regression = _for(result, table)
        assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
        assert {v.verdict for v in regression.reported.values()} == {"confirmed"}


def test_blocks_side_by_side_are_one_table_each(tmp_path: Path) -> None:
    """Data, a typed table, data, a typed table along the same rows: the labels of the first
    table do not reach over the second block's data to its figures."""
    rng = np.random.default_rng(95)
    blocks = []
    for k in range(3):
        data = _data(rng, "Gauge", 1, 1 + 7 * k, False)
        data.numbered = False
        older = _older_reading(rng, data) if k == 1 else {}
        blocks.append(Typed(data, "Gauge", 2, 4 + 7 * k, "plain", 4, older=older))
    path = tmp_path / "side.xlsx"
    scene = Scene([b.data for b in blocks], blocks)
    write_scene(scene, path)
    anchors = [t.anchor.address for t in find_typed_tables(read_workbook(path), set())]
    assert anchors == [b.placed["slope"] for b in blocks]
    result = _audit(scene, tmp_path)
    assert len(result.regressions) == 3
    for block in blocks:
        regression = _for(result, block)
        assert regression.x_range == block.data.ref(0)


@pytest.mark.parametrize(
    ("title", "numbered"), [("Site {k} — readings", False), ("Site {k} — {y} vs flow", True)]
)
def test_a_summary_column_linked_by_words_alone_draws_no_alarm(
    title: str, numbered: bool, tmp_path: Path
) -> None:
    """Site 3's column no single reading explains: its title names the sheet "Site 3" (the
    only word the sites do not share), so its data are found, but words on another sheet are no
    evidence a reviewer accepts: minor, every figure unverifiable. The quantities in the title
    pick x and y over a sample-number column."""
    rng = np.random.default_rng(4)
    sites = [_data(rng, f"Site {k}", 1, 1, False) for k in (1, 2, 3)]
    for data in sites:
        data.numbered = numbered  # a sample-number column before x: still x and y
    typed = _summary(sites, {2: _two_readings(sites[2])}, title)
    result = _audit(Scene(sites, typed), tmp_path)
    regression = _for(result, typed[2])
    assert (regression.x_range, regression.y_range) == (sites[2].ref(0), sites[2].ref(1))
    assert _serious(regression) == []
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity == "minor"
    assert finding.evidence["link"] == "words alone"
    assert "3" in finding.evidence["words_matched"]  # type: ignore[operator]
    assert {v.verdict for v in regression.reported.values()} == {"unverifiable"}


def test_a_table_linked_by_place_alone_draws_no_alarm(tmp_path: Path) -> None:
    rng = np.random.default_rng(41)
    data, row, col = _beside(rng, False)
    data.numbered = True  # a sample-number column before x: the pair beside is still x and y
    typed = Typed(data, data.sheet, row, col, "plain", 4, older=_two_readings(data))
    regression = _for(_audit(Scene([data], [typed]), tmp_path), typed)
    assert (regression.x_range, regression.y_range) == (data.ref(0), data.ref(1))
    assert _serious(regression) == []
    (finding,) = [f for f in regression.findings if f.check == "typed-stale"]
    assert finding.severity == "minor"
    assert "unverifiable" in finding.message
    assert {v.verdict for v in regression.reported.values()} == {"unverifiable"}
    assert finding.evidence["link"] == "place alone"
    assert "nothing but its place ties" in regression.reported["slope"].note


def test_a_table_with_no_data_is_listed_unverifiable(tmp_path: Path) -> None:
    """Figures that agree with one another and no data in the workbook: listed, every figure
    unverifiable, one info finding saying what was searched; never an alarm."""
    rng = np.random.default_rng(21)
    elsewhere = _data(rng, "Gone", 1, 1, False)  # the figures' data, not written
    kept = _data(rng, "Gauge", 1, 1, False)
    typed = Typed(elsewhere, "Notes", 2, 0, "plain", 4, title="Retired unit")
    result = _audit(Scene([kept], [typed]), tmp_path)
    regression = _for(result, typed)
    assert regression.x_range == "(no data found)"
    assert regression.n == len(elsewhere.x)  # n = df + 2, df from t, R² and p
    assert {v.verdict for v in regression.reported.values()} == {"unverifiable"}
    (finding,) = [f for f in result.all_findings() if f.check == "typed-source-missing"]
    assert (finding.severity, finding.cells) == ("info", [typed.placed["slope"]])
    assert not [f for f in result.all_findings() if f.severity in ("major", "critical")]


def test_unrelated_labelled_numbers_are_no_regression(tmp_path: Path) -> None:
    rng = np.random.default_rng(5)
    data = _data(rng, "Gauge", 1, 1, False)
    notes = [("Gauge", 2 + k, 6 + c, v) for k, row in enumerate(
        [("Rate", 0.35), ("Coefficient", 1.8), ("Count", 12), ("Points", 40)]
    ) for c, v in enumerate(row)]  # fmt: skip
    # figures with the words of a regression that do not agree with one another (t ≠ b / SE)
    notes += [("Gauge", 2 + k, 10 + c, v) for k, row in enumerate(
        [("Slope", 2.0), ("SE of slope", 0.5), ("t", 7.0), ("p-value", 0.2)]
    ) for c, v in enumerate(row)]  # fmt: skip
    path = tmp_path / "unrelated.xlsx"
    write_scene(Scene([data], [], notes), path)
    result = audit_workbook(path, load_policy("general"))
    assert result.regressions == []


def test_a_row_named_as_a_statistic_is_no_line_of_its_own(tmp_path: Path) -> None:
    """An intercept's estimate, SE, t and p under the headers "Slope estimate | Standard error |
    t | p" agree with one another (t = 3.0 / 1.2, p two-sided on 8 df, from scipy) and lie
    beside ten rows of data: the row is named "Intercept", so it is no table of a line."""
    rng = np.random.default_rng(77)
    x = np.sort(rng.uniform(2.0, 40.0, 10)).round(2)
    data = Data("Gauge", 1, 1, "Flow (L/s)", "Turbidity (NTU)", x, (1.0 + 0.2 * x).round(3))
    t_value = 3.0 / 1.2
    p_value = float(2 * stats.t.sf(t_value, 8))
    notes = [("Gauge", 2, 4 + c, v) for c, v in enumerate(
        ["", "Slope estimate", "Standard error", "t", "p"])] + [
        ("Gauge", 3, 4 + c, v) for c, v in enumerate(["Intercept", 3.0, 1.2, t_value, p_value])
    ]  # fmt: skip
    path = tmp_path / "coefficients.xlsx"
    write_scene(Scene([data], [], notes), path)
    assert find_typed_tables(read_workbook(path), set()) == []
    notes[5] = ("Gauge", 3, 4, "Turbidity")  # the same row named as a line's y: a table
    write_scene(Scene([data], [], notes), path)
    (table,) = find_typed_tables(read_workbook(path), set())
    assert table.title == "Turbidity"


def _table(values: dict[str, float], digits: int | None) -> TypedTable:
    cells = {}
    for k, (role, value) in enumerate(values.items()):
        shown = float(f"{value:.{digits}g}") if digits else value
        cells[role] = Cell("S", 1 + k, 2, shown)
    return TypedTable("S", cells, dict.fromkeys(cells, ""))


@pytest.mark.parametrize("digits", [None, 4, 3])
@pytest.mark.parametrize("n", [5, 9, 23])
def test_degrees_of_freedom_follow_from_the_figures(n: int, digits: int | None) -> None:
    rng = np.random.default_rng(n)
    x = rng.uniform(0, 10, n)
    y = 2.0 + 0.8 * x + rng.normal(0, 2.0, n)
    shown = figures(x, y)
    del shown["df"]
    tables = _consistent_tables(_table(shown, digits))
    assert tables and n - 2 in tables[0].df_options
    # t = slope / SE is checked: a t edited by hand breaks the table
    shown["t_slope"] *= 1.3
    assert _consistent_tables(_table(shown, digits)) == []


def _consistent_tables(table: TypedTable) -> list[TypedTable]:
    """The table's figures beside plain labels, in a workbook built in memory, read back."""
    sheet = Sheet("S")
    for role, cell in table.cells.items():
        words = WORDINGS["plain"].get(role, "Points")
        sheet.cells[(cell.row, 1)] = Cell("S", cell.row, 1, words)
        sheet.cells[(cell.row, 2)] = cell
    sheet.max_row, sheet.max_col = len(table.cells), 2
    workbook = Workbook("memory.xlsx", "", {"S": sheet}, [], stored_values=False)
    return find_typed_tables(workbook, set())


def test_the_one_changed_reading_is_found_by_its_row() -> None:
    rng = np.random.default_rng(3)
    x = np.linspace(1, 20, 12)
    y = 1.0 + 0.5 * x + rng.normal(0, 0.7, 12)
    older = y.copy()
    older[4] += 3.0
    shown = figures(x, older)
    found = single_reading(_table(shown, None), x, y)
    assert [r.index for r in found] == [4]
    assert found[0].then == pytest.approx(older[4], rel=1e-6)
    assert stats.linregress(x, older).slope == pytest.approx(shown["slope"])


def test_typed_tables_read_from_a_workbook(tmp_path: Path) -> None:
    rng = np.random.default_rng(9)
    data, row, col = _beside(rng, True)
    typed = Typed(data, data.sheet, row, col, "spanish", 4)
    path = tmp_path / "read.xlsx"
    write_scene(Scene([data], [typed]), path)
    (table,) = find_typed_tables(read_workbook(path), set())
    assert table.anchor.address == typed.placed["slope"]
    assert set(table.cells) == set(typed.roles)
    assert len(data.x) - 2 in table.df_options
