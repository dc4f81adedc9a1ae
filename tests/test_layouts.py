"""Generated layouts (fixtures/layout_generator.py): a sample of the committed set, audited.

The key is the generator's own (its choices and numpy fits), never regaudit's. Two kinds of check:
- the key is outside truth: on clean formula regressions, LibreOffice's stored values (the
  fixtures were recalculated by it) equal the generator's numpy fit;
- regaudit on a sample: the floors below are today's measured levels on this sample, so a change
  that loses ground fails; `python benchmarks/layouts.py` measures the whole set against the
  issue's goals (see README).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

import openpyxl
import pytest

from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy

ROOT = Path(__file__).resolve().parents[1]
LAYOUTS = ROOT / "fixtures" / "layouts"
sys.path.insert(0, str(ROOT / "fixtures"))
from layout_score import score  # noqa: E402

KEY = json.loads((LAYOUTS / "key.json").read_text(encoding="utf-8"))
SAMPLE = [book for index, book in enumerate(KEY["workbooks"]) if index % 9 == 0]  # 13 workbooks


def test_the_set_is_large_and_varied() -> None:
    regressions = [r for book in KEY["workbooks"] for r in book["regressions"]]
    assert len(regressions) >= 300
    for field in ("form", "orientation", "addressing", "wording"):
        assert len({r[field] for r in regressions}) >= 2, field
    assert len({r["mistake"] for r in regressions if r["mistake"]}) >= 8


@pytest.mark.parametrize("book", SAMPLE, ids=lambda b: b["file"])
def test_libreoffice_agrees_with_the_generator_on_clean_formulas(book: dict[str, Any]) -> None:
    workbook = openpyxl.load_workbook(LAYOUTS / "workbooks" / book["file"], data_only=True)
    checked = 0
    for reg in book["regressions"]:
        if reg["mistake"] or reg["form"] in ("typed_table", "typed_summary"):
            continue
        for stat in ("slope", "intercept", "r_squared"):
            sheet, _, cell = reg["cells"][stat].rpartition("!")
            stored = workbook[sheet][cell].value
            assert stored == pytest.approx(reg["correct"][stat], rel=1e-9, abs=1e-12), (reg, stat)
            checked += 1
    assert checked or all(
        r["mistake"] or r["form"].startswith("typed") for r in book["regressions"]
    )


def test_regaudit_on_a_sample_holds_its_measured_level() -> None:
    paths = [LAYOUTS / "workbooks" / book["file"] for book in SAMPLE]
    results = audit_batch(paths, load_policy("auto"))
    audit = {"workbooks": [w.to_dict() for w in results]}
    totals = score({"workbooks": SAMPLE}, audit)["totals"]
    # Measured on this sample: 28/33 found, 194/196 cells bound, 12/19 named, 2/14 clean with
    # an alarm, none invented (whole set: benchmarks/layouts.py).
    assert totals["regressions"] >= 30
    assert totals["found"] >= 0.8 * totals["regressions"]
    assert totals["cells_bound"] >= 0.95 * totals["cells"]
    assert totals.get("named", 0) >= 0.55 * totals["planted"]
    assert totals.get("clean_with_alarm", 0) <= 3
    assert totals.get("invented", 0) == 0
