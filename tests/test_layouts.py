"""Generated layouts (fixtures/layout_generator.py): a sample of the committed set, audited.

The key is the generator's own (its choices and numpy fits), never regaudit's. Two kinds of check:
- the key is outside truth: on clean formula regressions, LibreOffice's stored values (the
  fixtures were recalculated by it) equal the generator's numpy fit, and the pasted tables'
  figures (statsmodels) equal it too; under a shifted range or a consistent swap LibreOffice's
  values are the fit of the ranges the key says the formulas read;
- regaudit on a sample: the floors below are today's measured levels on this sample, so a change
  that loses ground fails; `python benchmarks/layouts.py` measures the whole set against the
  issue's goals (see README).
"""

from __future__ import annotations

import json
import sys
from collections import Counter
from dataclasses import asdict
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pytest
import xlsxwriter

from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy

ROOT = Path(__file__).resolve().parents[1]
LAYOUTS = ROOT / "fixtures" / "layouts"
sys.path.insert(0, str(ROOT / "fixtures"))
from layout_data import Guarded  # noqa: E402
from layout_generator import WorkbookBuilder  # noqa: E402
from layout_score import names, score  # noqa: E402

KEY = json.loads((LAYOUTS / "key.json").read_text(encoding="utf-8"))
ARRANGEMENTS = sorted({book["arrangement"] for book in KEY["workbooks"]})
# The first four workbooks of each arrangement (20 workbooks).
SAMPLE = [
    book
    for arrangement in ARRANGEMENTS
    for book in [b for b in KEY["workbooks"] if b["arrangement"] == arrangement][:4]
]
NOT_COMPUTED = ("typed_table", "typed_summary", "chart_trendline")  # typed or rounded figures


def _value(workbook: Any, ref: str) -> Any:
    sheet, _, cell = ref.rpartition("!")
    return workbook[sheet][cell].value


def _column(workbook: Any, ref: str) -> np.ndarray:
    sheet, _, cells = ref.rpartition("!")
    return np.array([c.value for row in workbook[sheet][cells] for c in row], dtype=float)


def test_the_set_is_large_and_varied() -> None:
    regressions = [r for book in KEY["workbooks"] for r in book["regressions"]]
    assert len(regressions) >= 300
    for field in ("form", "orientation", "addressing", "wording", "df_style"):
        assert len({r[field] for r in regressions}) >= 2, field
    assert len({r["form"] for r in regressions}) == 8
    assert set(ARRANGEMENTS) == {"blocks", "grid", "grid_rows", "split", "summary"}
    planted = Counter(r["mistake"] for r in regressions if r["mistake"])
    assert len(planted) == 10
    assert planted["range-shifted"] >= 15 and planted["xy-swapped-consistent"] >= 15
    assert Counter(r["job"] for r in regressions)["calibration"] >= 30


def test_the_generator_still_writes_the_committed_key(tmp_path: Path) -> None:
    """The first workbooks' keys, rebuilt from the seed (XlsxWriter only, no recalculation),
    equal the committed ones: the committed set is what the generator writes today."""
    for index, committed in enumerate(KEY["workbooks"][:12]):
        builder = WorkbookBuilder(tmp_path / committed["file"], KEY["seed"] + index)
        rebuilt = builder.build(int(builder.plan.rng.integers(2, 5)))
        assert json.loads(json.dumps(asdict(rebuilt))) == committed


def test_a_cell_written_twice_stops_the_generator(tmp_path: Path) -> None:
    book = xlsxwriter.Workbook(str(tmp_path / "twice.xlsx"))
    sheet = Guarded(book.add_worksheet("Readings"), "Readings")
    sheet.write_number(2, 1, 1.5)
    sheet.write_array_formula("D2:E6", "{=LINEST(B2:B9,A2:A9,TRUE,TRUE)}")
    with pytest.raises(ValueError, match="Readings!B3 is written twice"):
        sheet.write_string(2, 1, "b1")
    with pytest.raises(ValueError, match="Readings!E4 is written twice"):
        sheet.write_formula(3, 4, "=1")
    book.close()


def test_no_cell_belongs_to_two_regressions_of_the_key() -> None:
    for book in KEY["workbooks"]:
        owners = Counter(c for r in book["regressions"] for c in r["cells"].values())
        assert max(owners.values(), default=1) == 1, book["file"]


@pytest.mark.parametrize("book", SAMPLE, ids=lambda b: b["file"])
def test_libreoffice_agrees_with_the_generator_on_clean_formulas(book: dict[str, Any]) -> None:
    workbook = openpyxl.load_workbook(LAYOUTS / "workbooks" / book["file"], data_only=True)
    checked = 0
    for reg in book["regressions"]:
        for ref in reg["cells"].values():  # typed, pasted or computed: a number in every cell
            assert isinstance(_value(workbook, ref), int | float), (reg["id"], ref)
        if reg["mistake"] or reg["form"] in NOT_COMPUTED:
            continue
        for stat in ("slope", "intercept", "se_slope", "p_slope", "r_squared"):
            stored = _value(workbook, reg["cells"][stat])
            assert stored == pytest.approx(reg["correct"][stat], rel=1e-9, abs=1e-12), (reg, stat)
            checked += 1
    assert checked or all(r["mistake"] or r["form"] in NOT_COMPUTED for r in book["regressions"])


def test_shifted_and_swapped_plants_read_the_ranges_the_key_names() -> None:
    """LibreOffice's slope under a shifted range or a consistent swap is numpy's fit of the
    ranges as written (the neighbouring column; x and y exchanged), not of the intended ones."""
    checked = Counter()
    for book in KEY["workbooks"]:
        planted = [
            r
            for r in book["regressions"]
            if r["mistake"] in ("range-shifted", "xy-swapped-consistent")
            and r["form"] not in NOT_COMPUTED
        ]
        if not planted:
            continue
        workbook = openpyxl.load_workbook(LAYOUTS / "workbooks" / book["file"], data_only=True)
        for reg in planted:
            x, y = _column(workbook, reg["x_range"]), _column(workbook, reg["y_range"])
            slope = float(np.polyfit(x, y, 1)[0])
            assert _value(workbook, reg["cells"]["slope"]) == pytest.approx(slope, rel=1e-9)
            assert reg["x_range"] != reg["intended_x_range"] or (
                reg["y_range"] != reg["intended_y_range"]
            )
            checked[reg["mistake"]] += 1
    assert checked["range-shifted"] >= 10 and checked["xy-swapped-consistent"] >= 10


def test_a_finding_names_a_shifted_or_swapped_plant_by_its_word() -> None:
    shifted = {"check": "words-range", "kind": "range-shifted-by-words"}
    swapped = {"check": "axis-words", "kind": "xy-swapped"}
    assert names(shifted, "range-shifted") and names(swapped, "xy-swapped-consistent")
    assert not names(swapped, "range-shifted") and not names(shifted, "xy-swapped-consistent")
    assert not names({"check": "p-value-tails", "kind": "p-one-tailed"}, "xy-swapped")


def test_regaudit_on_a_sample_holds_its_measured_level() -> None:
    paths = [LAYOUTS / "workbooks" / book["file"] for book in SAMPLE]
    results = audit_batch(paths, load_policy("auto"))
    audit = {"workbooks": [w.to_dict() for w in results]}
    totals = score({"workbooks": SAMPLE}, audit)["totals"]
    # Measured on this sample: 61/61 found, 401/401 cells bound (each to its own regression
    # and no other), 34/34 named (23 before the words were read: shifted ranges and consistent
    # swaps), 13/13 decision-changing ones critical, 0/27 clean with an alarm, none invented
    # (whole set: benchmarks/layouts.py).
    assert totals["regressions"] == 61
    assert totals["found"] == 61
    assert totals["cells_bound"] == totals["cells"] == 401
    assert totals.get("named", 0) >= 34
    assert totals.get("decision_critical", 0) == totals.get("decision_changing", 0) == 13
    assert totals.get("clean_with_alarm", 0) == 0
    assert totals.get("invented", 0) == 0
