"""LINEST in the forms people leave it, structured table references and awkward sheet names.

Scenario (invented): the Tollvane Works spring rig, load (N) against extension (mm). Workbooks
are written here with XlsxWriter (no stored values: "reported" is the evaluator's); expected
slopes and intercepts come from numpy.polyfit, the outside reference.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter
from xlsxwriter.worksheet import Worksheet

from auditor.formula.structured import resolve_structured
from auditor.model import RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook
from auditor.read.workbook import Table, Workbook

RNG = np.random.default_rng(2031)
X = np.round(np.linspace(2.0, 30.0, 12), 1)
Y = np.round(4.0 + 11.5 * X + RNG.normal(0, 2.0, 12), 2)
SLOPE, INTERCEPT = np.polyfit(X, Y, 1)  # outside reference: numpy least squares

Writer = Callable[[xlsxwriter.Workbook, Worksheet, str], None]


def _one(path: Path, sheet_name: str, write: Writer) -> RegressionResult:
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet(sheet_name)
    sheet.write_row(0, 0, ["Extension mm", "Load N"])
    for i in range(12):
        sheet.write_row(i + 1, 0, [float(X[i]), float(Y[i])])
    quoted = "'" + sheet_name.replace("'", "''") + "'"
    write(book, sheet, quoted)
    book.close()
    result = audit_workbook(path, load_policy("general"))
    (regression,) = result.regressions
    return regression


VARIANTS: dict[str, tuple[str, Writer, dict[str, str]]] = {
    "single cell": (
        "Rig",
        lambda b, s, q: s.write_formula("E2", "=LINEST(B2:B13,A2:A13)"),
        {"slope": "E2"},
    ),
    "single cell in IFERROR": (
        "Rig",
        lambda b, s, q: s.write_formula("E2", '=IFERROR(LINEST(B2:B13,A2:A13),"")'),
        {"slope": "E2"},
    ),
    "truncated 3x2 block": (
        "Rig",
        lambda b, s, q: s.write_array_formula("E2:F4", "{=LINEST(B2:B13,A2:A13,TRUE,TRUE)}"),
        {"slope": "E2", "intercept": "F2", "se_slope": "E3", "r_squared": "E4"},
    ),
    "spilled dynamic array": (
        "Rig",
        lambda b, s, q: s.write_dynamic_array_formula("E2:F6", "=LINEST(B2:B13,A2:A13,1,1)"),
        {"slope": "E2", "intercept": "F2", "df": "F5", "ss_residual": "F6"},
    ),
    "other sheet, leading and trailing spaces": (
        " Rig data ",
        lambda b, s, q: b.add_worksheet("Итоги").write_formula(
            "B2", f"=INDEX(LINEST({q}!B2:B13,{q}!A2:A13),1,2)"
        ),
        {"intercept": "B2"},
    ),
}


@pytest.mark.parametrize("name", sorted(VARIANTS))
def test_linest_variants(tmp_path: Path, name: str) -> None:
    sheet_name, write, cells = VARIANTS[name]
    regression = _one(tmp_path / "rig.xlsx", sheet_name, write)
    assert regression.x_range == f"{sheet_name}!A2:A13"
    assert regression.y_range == f"{sheet_name}!B2:B13"
    assert regression.intended["slope"] == pytest.approx(SLOPE, rel=1e-9)
    assert regression.intended["intercept"] == pytest.approx(INTERCEPT, rel=1e-9)
    for key, cell in cells.items():
        value = regression.reported[key]
        assert value.cell.endswith("!" + cell)
        assert value.verdict == "confirmed", (key, value)


def test_table_references_resolve_to_the_columns(tmp_path: Path) -> None:
    def write(book: xlsxwriter.Workbook, sheet: Worksheet, quoted: str) -> None:
        rows = [[float(a), float(b)] for a, b in zip(X, Y, strict=True)]
        options = {"name": "Spring", "columns": [{"header": "Ext"}, {"header": "Load"}]}
        sheet.add_table("A1:B13", options | {"data": rows})
        sheet.write_formula("E2", "=SLOPE(Spring[Load],Spring[Ext])")
        sheet.write_formula("E3", "=INTERCEPT(Spring[[#Data],[Load]],Spring[[#Data],[Ext]])")

    regression = _one(tmp_path / "table.xlsx", "Rig", write)
    assert (regression.x_range, regression.y_range) == ("Rig!A2:A13", "Rig!B2:B13")
    assert regression.reported["slope"].as_written == pytest.approx(SLOPE, rel=1e-9)
    assert regression.reported["intercept"].as_written == pytest.approx(INTERCEPT, rel=1e-9)


def test_table_parts_are_read(tmp_path: Path) -> None:
    path = tmp_path / "tables.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Log")
    sheet.add_table(
        "B3:D9",
        {
            "name": "Runs",
            "total_row": True,
            "columns": [{"header": "Run"}, {"header": "Temp [C]"}, {"header": "Drift"}],
        },
    )
    book.close()
    table = read_workbook(path).tables["RUNS"]
    assert table == Table("Runs", "Log", 3, 2, 9, 4, ("Run", "Temp [C]", "Drift"), 1, 1)


TABLE = Table("Runs", "Log", 3, 2, 9, 4, ("Run", "Temp [C]", "Drift"), 1, 1)


@pytest.mark.parametrize(
    ("text", "block"),
    [
        ("Runs[Drift]", (4, 4, 8, 4)),
        ("runs[drift]", (4, 4, 8, 4)),
        ("Runs[[#Data],[Drift]]", (4, 4, 8, 4)),
        ("Runs[[#All],[Drift]]", (3, 4, 9, 4)),
        ("Runs[[#Headers],[Run]]", (3, 2, 3, 2)),
        ("Runs[[#Totals],[Drift]]", (9, 4, 9, 4)),
        ("Runs[[Run]:[Drift]]", (4, 2, 8, 4)),
        ("Runs[[Temp '[C']]]", (4, 3, 8, 3)),
        ("Runs[#All]", (3, 2, 9, 4)),
        ("Runs[]", (4, 2, 8, 4)),
    ],
)
def test_structured_forms(text: str, block: tuple[int, int, int, int]) -> None:
    workbook = Workbook("t.xlsx", "", {}, [], True, tables={"RUNS": TABLE})
    ref = resolve_structured(workbook, text)
    assert ref is not None
    assert (ref.sheet, ref.r1, ref.c1, ref.r2, ref.c2) == ("Log", *block)


@pytest.mark.parametrize("text", ["Runs[@Drift]", "Runs[Pressure]", "Other[Drift]", "Runs"])
def test_structured_forms_left_unresolved(text: str) -> None:
    workbook = Workbook("t.xlsx", "", {}, [], True, tables={"RUNS": TABLE})
    assert resolve_structured(workbook, text) is None


def test_formulas_over_data_in_rows(tmp_path: Path) -> None:
    path = tmp_path / "rows.xlsx"
    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Лист1")  # no labels, a Cyrillic sheet name
    sheet.write_row(0, 0, list(map(float, X)))
    sheet.write_row(1, 0, list(map(float, Y)))
    sheet.write_formula("B4", "=SLOPE(A2:L2,A1:L1)")
    sheet.write_array_formula("B6:C8", "{=LINEST(A2:L2,A1:L1,TRUE,TRUE)}")
    book.close()
    (regression,) = audit_workbook(path, load_policy("general")).regressions
    assert (regression.x_range, regression.y_range, regression.n) == (
        "Лист1!A1:L1",
        "Лист1!A2:L2",
        12,
    )
    assert regression.intended["slope"] == pytest.approx(SLOPE, rel=1e-9)
    assert regression.reported["intercept"].cell == "Лист1!C6"
    assert {v.verdict for v in regression.reported.values()} == {"confirmed"}
