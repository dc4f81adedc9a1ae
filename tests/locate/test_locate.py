"""The locator runs its recognisers in order, merges declared regressions with the formulas over
the same data, and never binds a reported cell twice. Workbooks are built in memory here."""

from __future__ import annotations

import pytest

from auditor.formula.syntax import Ref
from auditor.locate.formulas import FormulaLocator
from auditor.locate.locator import RECOGNISERS, Recogniser, locate
from auditor.locate.roles import role_from_label
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.read.workbook import Cell, DefinedName, Sheet, Workbook


def _book(formulas: dict[str, str], names: list[DefinedName] | None = None) -> Workbook:
    sheet = Sheet("Data", max_row=8, max_col=6)
    for row in range(2, 9):
        sheet.cells[(row, 1)] = Cell("Data", row, 1, float(row))  # x: 2..8
        sheet.cells[(row, 2)] = Cell("Data", row, 2, 3.0 * row + (row % 3))  # y
    for address, formula in formulas.items():
        col, row = ord(address[0]) - 64, int(address[1:])
        sheet.cells[(row, col)] = Cell("Data", row, col, 1.0, formula)
    return Workbook("book.xlsx", "", {"Data": sheet}, names or [], True)


def test_the_recognisers_run_in_a_stated_order() -> None:
    names = [r.name for r in RECOGNISERS]
    assert names.index("bindings") < names.index("formulas")
    assert names.index("names") < names.index("formulas")
    assert all(r.late for r in RECOGNISERS if r.name == "labels")


def test_slope_and_intercept_over_one_pair_are_one_regression() -> None:
    book = _book({"D2": "=SLOPE(B2:B8,A2:A8)", "D3": "=INTERCEPT(B2:B8,A2:A8)"})
    specs = locate(book)
    assert len(specs) == 1
    assert specs[0].found_by == "formulas"
    assert {k: s.cell.address for k, s in specs[0].stats.items()} == {
        "slope": "Data!D2",
        "intercept": "Data!D3",
    }
    assert (specs[0].x.address, specs[0].y.address) == ("Data!A2:A8", "Data!B2:B8")


def test_a_declared_regression_absorbs_the_formulas_over_its_data() -> None:
    names = [DefinedName("Cal_x", "Data!$A$2:$A$8"), DefinedName("Cal_y", "Data!$B$2:$B$8")]
    specs = locate(_book({"D2": "=SLOPE(B2:B8,A2:A8)"}, names))
    assert [s.found_by for s in specs] == ["names"]
    assert specs[0].stats["slope"].cell.address == "Data!D2"


def test_a_new_recogniser_plugs_in_and_late_ones_skip_taken_cells() -> None:
    seen_taken: list[set[str]] = []

    def typed_slope(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
        seen_taken.append(set(taken))
        cell = locator.workbook.cell("Data", 2, 4)
        assert cell is not None
        if cell.address in taken:
            return []
        x, y = Ref("Data", 2, 1, 8, 1), Ref("Data", 2, 2, 8, 2)
        spec = RegressionSpec("typed", "Data", x, y, True, "labels")
        spec.stats["slope"] = StatCell("slope", cell, "label")
        return [spec]

    extra = (*RECOGNISERS, Recogniser("typed", typed_slope, late=True))
    specs = locate(_book({"D2": "=SLOPE(B2:B8,A2:A8)"}), recognisers=extra)
    assert "Data!D2" in seen_taken[-1]
    assert len(specs) == 1  # the formula regression holds D2; the late recogniser took nothing


@pytest.mark.parametrize(
    ("label", "role"),
    [
        ("Pendiente", "slope"),
        ("Error estándar de la pendiente", "se_slope"),
        ("Valor p", "p_slope"),
        ("Grados de libertad", "df"),
        ("R cuadrado", "r_squared"),
        ("Steigung", "slope"),
        ("Achsenabschnitt", "intercept"),
        ("Standardfehler der Steigung", "se_slope"),
        ("p-Wert", "p_slope"),
        ("Bestimmtheitsmaß", "r_squared"),
        ("Pente", "slope"),
        ("Valeur p", "p_slope"),
        ("Coefficient R²", "r_squared"),  # not the coefficient of a slope
        ("Slope (mg/L per h)", "slope"),
        ("Pendientes pagadas", None),  # not the word alone: a longer word is no label
        ("Coefficient R2", "r_squared"),
        ("Coefficient", "slope"),
    ],
)
def test_statistic_labels_in_other_languages(label: str, role: str | None) -> None:
    # Spanish, German and French wording of the labels (common practice in those languages).
    assert role_from_label(label) == role
