"""Binding: every reported-statistic cell belongs to exactly one regression.

Grids of regressions in both orientations (grid_books.py: XlsxWriter workbooks whose stored
values come from numpy least squares and scipy's t distribution, as a spreadsheet saves them),
a p bound through its t cell when its df cell belongs to a neighbour, and the whole generated
layout set and demo corpus with no cell claimed by two regressions.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from grid_books import STATS, Bench, benches, spreadsheet_fit, write_grid

from auditor.formula.syntax import Ref
from auditor.locate.binding import owner
from auditor.locate.locator import locate
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell

ROOT = Path(__file__).resolve().parents[2]
POLICY = load_policy("general")


def _owners(specs: list[RegressionSpec]) -> dict[str, list[str]]:
    """Cell address -> the ids of the regressions that report it (one entry per regression)."""
    found: dict[str, list[str]] = {}
    for spec in specs:
        for address in dict.fromkeys(s.cell.address for s in spec.stats.values()):
            found.setdefault(address, []).append(spec.id)
    return found


def _bound_to(specs: list[RegressionSpec], address: str) -> list[RegressionSpec]:
    return [s for s in specs if any(c.cell.address == address for c in s.stats.values())]


@pytest.mark.parametrize("across", [False, True], ids=["one-per-column", "one-per-row"])
@pytest.mark.parametrize("seed", range(6))
def test_a_grid_binds_every_cell_to_the_regression_of_its_own_column_or_row(
    tmp_path: Path, seed: int, across: bool
) -> None:
    group = benches(100 + seed, 2 + seed % 3)
    if seed % 2:
        group[-1].se_from_sd_y = True  # a formula with no statistic shape: bound by its label
    path = tmp_path / "grid.xlsx"
    write_grid(path, group, across=across, seed=seed, wording=("terse", "verbose")[seed % 2])
    specs = locate(read_workbook(path))
    assert len(specs) == len(group)
    for bench in group:
        for stat in STATS:
            holders = _bound_to(specs, bench.cells[stat])
            assert len(holders) == 1, (stat, bench.cells[stat], [h.id for h in holders])
            assert holders[0].y.address == bench.y_range, (stat, bench.cells[stat])
            key = next(
                k for k, c in holders[0].stats.items() if c.cell.address == bench.cells[stat]
            )
            assert key == stat


def test_row_names_that_read_like_a_statistic_are_not_taken_for_its_label(
    tmp_path: Path,
) -> None:
    """One regression per row named "S-1", "S-2", …: "S" alone would read as the residual SD,
    but a column of names holds one reading, a grid's labels several."""
    group = benches(11, 3)
    group[2].se_from_sd_y = True
    path = tmp_path / "grid.xlsx"
    write_grid(path, group, across=True, seed=2, names="S-{}")
    specs = locate(read_workbook(path))
    holders = _bound_to(specs, group[2].cells["se_slope"])
    assert len(holders) == 1
    keys = [k for k, c in holders[0].stats.items() if c.cell.address == group[2].cells["se_slope"]]
    assert keys == ["se_slope"]


def _regression_of(result: list[RegressionResult], bench: Bench) -> RegressionResult:
    return next(r for r in result if r.y_range == bench.y_range)


@pytest.mark.parametrize("across", [False, True], ids=["one-per-column", "one-per-row"])
def test_an_se_from_the_sd_of_y_in_a_later_column_is_named(tmp_path: Path, across: bool) -> None:
    group = benches(7, 3)
    group[2].se_from_sd_y = True
    path = tmp_path / "grid.xlsx"
    write_grid(path, group, across=across, seed=7)
    result = audit_workbook(path, POLICY)
    third = _regression_of(result.regressions, group[2])
    kinds = {k for f in third.findings for k in [f.kind, *f.evidence.get("kinds", [])]}
    assert "se-sd-y" in kinds
    # numpy: the SE the cell shows is SD(y)/sqrt(Sxx), the intended one STEYX/sqrt(Sxx)
    right = spreadsheet_fit(group[2].x, group[2].y)
    se = third.reported["se_slope"]
    assert se.intended == pytest.approx(right["se_slope"], rel=1e-9)
    assert se.verdict == "mismatch"
    for clean in group[:2]:
        serious = [
            f
            for f in _regression_of(result.regressions, clean).findings
            if f.severity in ("major", "critical")
        ]
        assert serious == [], [f.message for f in serious]


def test_a_p_whose_df_cell_is_the_neighbours_is_bound_through_its_t(tmp_path: Path) -> None:
    group = benches(21, 2)
    group[0].x, group[0].y = group[0].x[:7], group[0].y[:7]  # 5 df against the other's more
    assert len(group[1].x) > 7
    group[1].df_from = 0  # the p of bench 2 reads bench 1's df: a copy slip
    path = tmp_path / "grid.xlsx"
    write_grid(path, group, across=False, seed=3)
    specs = locate(read_workbook(path))
    p_cell = group[1].cells["p_slope"]
    holders = _bound_to(specs, p_cell)
    assert [h.y.address for h in holders] == [group[1].y_range]
    result = audit_workbook(path, POLICY)
    second = _regression_of(result.regressions, group[1])
    p = second.reported["p_slope"]
    assert p.cell == p_cell and p.verdict == "mismatch"
    # scipy: the p the cell shows uses 5 df; the intended one n - 2
    right = spreadsheet_fit(group[1].x, group[1].y)
    assert p.intended == pytest.approx(right["p_slope"], rel=1e-9)
    first = _regression_of(result.regressions, group[0])
    assert p_cell not in {v.cell for v in first.reported.values()}


@pytest.mark.parametrize("form", ["slope", "index", "hand"])
@pytest.mark.parametrize("across", [False, True], ids=["one-per-column", "one-per-row"])
def test_a_typed_df_behind_the_first_column_is_bound_through_the_p_that_reads_it(
    tmp_path: Path, across: bool, form: str
) -> None:
    group = benches(5, 3)
    right_df = float(len(group[1].x) - 2)
    group[1].typed_df = right_df
    group[2].typed_df = float(len(group[2].x) - 1)  # typed n − 1: the p uses one df too many
    path = tmp_path / "grid.xlsx"
    write_grid(path, group, across=across, seed=1, form=form)
    specs = locate(read_workbook(path))
    for bench in group[1:]:
        holders = _bound_to(specs, bench.cells["df"])
        assert [h.y.address for h in holders] == [bench.y_range]
    result = audit_workbook(path, POLICY)
    clean = _regression_of(result.regressions, group[1])
    assert clean.reported["df"].verdict == "confirmed"
    assert clean.reported["df"].value == right_df
    slipped = _regression_of(result.regressions, group[2])
    assert slipped.reported["df"].verdict == "mismatch"
    # scipy: the p shown uses n − 1 df, the intended one n − 2
    assert slipped.reported["p_slope"].intended == pytest.approx(
        spreadsheet_fit(group[2].x, group[2].y)["p_slope"], rel=1e-9
    )
    assert any(f.severity in ("major", "critical") for f in slipped.findings)


def _spec(
    name: str, x: tuple[int, int, int], y: tuple[int, int, int], stats: dict[str, str]
) -> RegressionSpec:
    """A regression on sheet S over column ranges given as (column, first row, last row)."""
    x_ref, y_ref = (Ref("S", r1, c, r2, c) for c, r1, r2 in (x, y))
    spec = RegressionSpec(name, "S", x_ref, y_ref, True, "formulas")
    for key, coord in stats.items():
        col, row = ord(coord[0]) - 64, int(coord[1:])
        spec.stats[key] = StatCell(key, Cell("S", row, col, 0.0), "formula")
    return spec


def test_the_owner_of_a_shared_cell_is_where_its_t_comes_from() -> None:
    from auditor.formula.syntax import parse
    from auditor.read.workbook import Workbook

    first = _spec("one", (1, 2, 9), (2, 2, 9), {"t_slope": "E6", "df": "E8"})
    second = _spec("two", (3, 2, 9), (4, 2, 9), {"t_slope": "F6", "df": "F8"})
    claimed = StatCell("p_slope", Cell("S", 7, 6, 0.1, "=TDIST(ABS(F6),E8,2)"), "formula")
    node = parse("=TDIST(ABS(F6),E8,2)", "S", Workbook("w.xlsx", "", {}, [], True))
    assert owner([first, second], claimed, node) is second  # t (2) outweighs df (1)
    typed = StatCell("n", Cell("S", 9, 5, 8.0), "label")
    assert owner([second, first], typed, None) is first  # no formula: the column it sits in


def _double_bound(folder: Path) -> list[str]:
    problems = []
    for path in sorted(folder.glob("*.xlsx")):
        try:
            specs = locate(read_workbook(path))
        except Exception as exc:  # an unreadable demo file is another test's business
            problems.append(f"{path.name}: {exc!r}")
            continue
        for address, ids in _owners(specs).items():
            if len(ids) > 1:
                problems.append(f"{path.name}: {address} bound to {ids}")
    return problems


@pytest.mark.parametrize(
    ("folder", "at_least"),
    [
        ("fixtures/layouts/workbooks", 100),
        ("fixtures/workbooks", 20),
        ("fixtures/false_alarms", 5),
        ("fixtures/edge", 2),
        ("fixtures/pasted", 1),
    ],
    ids=["generated", "demo", "false-alarms", "edge", "pasted"],
)
def test_no_cell_is_bound_to_two_regressions(folder: str, at_least: int) -> None:
    path = ROOT / folder
    assert len(list(path.glob("*.xlsx"))) >= at_least
    assert _double_bound(path) == []
