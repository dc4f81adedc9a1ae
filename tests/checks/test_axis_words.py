"""Roles from words (checks axis-words-swapped and axis-words-next-column) on generated variety.

The workbooks come from fixtures/words_scenarios.py: six invented topics (English, Spanish,
German; distinct units, and one pair sharing a unit), columns and rows, SLOPE family and
INDEX(LINEST), labels with rates (``Slope (L per t)``), with quantity names, titles only, generic
headers and contradicting words, planted clean, swapped or shifted. The expected numbers are the
scenario's own scipy ``linregress`` fits (outside reference), never regaudit's: the slope the
words describe, and whether the conclusion (p across 0.05 or the slope's sign) changes.
"""

from __future__ import annotations

import functools
import itertools
import json
import re
import shutil
import sys
import tempfile
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pytest
import xlsxwriter

from auditor.evaluation.evaluator import Evaluator
from auditor.model import Finding, RegressionResult
from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "fixtures"))
from words_scenarios import TOPICS, Scenario, Topic, write_scenario  # noqa: E402

CHECKS = ("axis-words-swapped", "axis-words-next-column")
SHARED_UNIT = TOPICS[5]  # Dose (mg/L) and Residual chlorine (mg/L): units say nothing
DISTINCT = TOPICS[:5]


def _variety(
    plant: str, words: tuple[str, ...], topics: tuple[Topic, ...], y_first: bool | None = None
) -> list[Scenario]:
    """Every topic with every wording; orientation, form and table order cycling (a seeded
    spread); ``y_first`` fixes the table order."""
    orders = (False, True) if y_first is None else (y_first,)
    shapes = itertools.cycle(
        itertools.product(("columns", "rows"), ("slope_family", "index_linest"), orders)
    )
    out = []
    for seed, (topic, wording) in enumerate(itertools.product(topics, words)):
        orientation, form, first = next(shapes)
        out.append(Scenario(topic, plant, wording, orientation, form, seed + 11, y_first=first))
    return out


@functools.cache
def _audited(group: str) -> list[tuple[Scenario, dict[str, Any], RegressionResult, list[Finding]]]:
    """One workbook per group, one sheet per scenario, audited; each truth with its result."""
    scenarios = GROUPS[group]
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / f"{group}.xlsx"
        book = xlsxwriter.Workbook(str(path))
        truths = [write_scenario(book, f"S{i}", s) for i, s in enumerate(scenarios)]
        book.close()
        result = audit_workbook(path, load_policy("general"))
    out = []
    for scenario, truth in zip(scenarios, truths, strict=True):
        match = [r for r in result.regressions if r.y_range == truth["y_range"]]
        assert len(match) == 1, (truth["y_range"], [r.y_range for r in result.regressions])
        mine = [f for f in match[0].findings if f.check in CHECKS]
        mine += [f for f in result.findings if f.check in CHECKS and truth["sheet"] in f.cells[0]]
        out.append((scenario, truth, match[0], mine))
    return out


GROUPS: dict[str, list[Scenario]] = {
    "swapped_units": _variety("swapped", ("rate", "names", "both", "unit", "slash"), DISTINCT)
    + _variety("swapped", ("names",), (SHARED_UNIT,)),
    "swapped_title": _variety("swapped", ("title",), DISTINCT, y_first=True),
    "swapped_conventions": _variety("swapped", ("title",), TOPICS, y_first=False),
    "shifted": _variety("shifted-y", ("rate", "names", "title", "slash"), DISTINCT)
    + _variety("shifted-x", ("rate", "names", "title"), DISTINCT),
    "shifted_title": _variety("shifted-y", ("loose-title",), DISTINCT),
    "clean": _variety("clean", ("rate", "names", "title", "both", "unit", "slash"), TOPICS),
    "ambiguous": _variety("swapped", ("generic", "contradict"), DISTINCT)
    + _variety("swapped", ("generic", "unit", "slash"), (SHARED_UNIT,))
    + _variety("swapped", ("rate",), (SHARED_UNIT,))
    + _variety("shifted-y", ("generic", "contradict"), DISTINCT),
}


def _close(a: object, b: float, rel: float = 1e-6) -> bool:
    return isinstance(a, float) and abs(a - b) <= rel * max(abs(a), abs(b))


def _ids(group: str) -> list[str]:
    return [
        f"{s.topic.language}-{s.topic.y[0]}-{s.words}-{s.orientation}-{s.form}"
        for s in GROUPS[group]
    ]


@pytest.mark.parametrize("index", range(len(GROUPS["swapped_units"])), ids=_ids("swapped_units"))
def test_a_consistent_swap_is_named_from_units_and_names(index: int) -> None:
    scenario, truth, result, findings = _audited("swapped_units")[index]
    assert [f.kind for f in findings] == ["xy-swapped"], [f.message for f in findings]
    finding = findings[0]
    assert finding.severity == "major"  # t and p are symmetric in x and y: never critical
    assert finding.cells[0] == truth["cells"]["slope"]
    # The slope the words describe: fuel on load, scipy's fit of the numbers written.
    assert _close(finding.evidence["slope_as_words_say"], truth["as_words_say"]["slope"])
    assert _close(finding.evidence["slope_as_written"], truth["as_written"]["slope"])
    x_name, y_name = scenario.topic.x[0], scenario.topic.y[0]
    assert f"'{x_name} ({scenario.topic.x[1]})' as x" in finding.message
    assert f"'{y_name} ({scenario.topic.y[1]})' as y" in finding.message
    assert result.reported["slope"].verdict == "confirmed"  # formulas alone see nothing wrong
    # The fix's slope formula reads the words' y (the formulas' x) against the words' x.
    x_cells, y_cells = (r.rpartition("!")[2] for r in (truth["x_range"], truth["y_range"]))
    assert f"=SLOPE({x_cells},{y_cells})" in finding.fix


@pytest.mark.parametrize("index", range(len(GROUPS["swapped_title"])), ids=_ids("swapped_title"))
def test_a_swap_only_a_title_says_is_a_minor_risk(index: int) -> None:
    _, truth, _, findings = _audited("swapped_title")[index]
    assert [(f.kind, f.severity) for f in findings] == [("xy-swapped", "minor")]
    assert "unverifiable" in findings[0].message
    assert _close(findings[0].evidence["slope_as_words_say"], truth["as_words_say"]["slope"])


@pytest.mark.parametrize(
    "index", range(len(GROUPS["swapped_conventions"])), ids=_ids("swapped_conventions")
)
def test_a_title_and_the_table_order_together_make_a_swap_major(index: int) -> None:
    """Two conventions (common practice): 'Fuel vs load' names y first, and the table puts
    load (x) before fuel; every formula fits load on fuel."""
    scenario, truth, _, findings = _audited("swapped_conventions")[index]
    assert [(f.kind, f.severity) for f in findings] == [("xy-swapped", "major")]
    assert "two conventions (common practice) agree" in findings[0].message
    assert _close(findings[0].evidence["slope_as_words_say"], truth["as_words_say"]["slope"])


@pytest.mark.parametrize("index", range(len(GROUPS["shifted"])), ids=_ids("shifted"))
def test_a_range_beside_the_named_one_is_named_and_its_fit_given(index: int) -> None:
    scenario, truth, _, findings = _audited("shifted")[index]
    assert [f.kind for f in findings] == ["range-shifted"], [f.message for f in findings]
    finding = findings[0]
    written, meant = truth["as_written"], truth["as_words_say"]
    changes = (written["p_slope"] < 0.05) != (meant["p_slope"] < 0.05) or (
        written["slope"] * meant["slope"] < 0
    )
    assert finding.severity == ("critical" if changes else "major")
    assert finding.evidence["range_meant"] == truth["words_range"]
    assert _close(finding.evidence["slope_as_words_say"], meant["slope"])
    assert _close(finding.evidence["p_as_words_say"], meant["p_slope"])
    assert finding.evidence["role"] == scenario.plant[-1]
    meant_cells = truth["words_range"].rpartition("!")[2]
    other = truth["x_range" if scenario.plant == "shifted-y" else "y_range"].rpartition("!")[2]
    slope = f"=SLOPE({meant_cells},{other})" if scenario.plant == "shifted-y" else (
        f"=SLOPE({other},{meant_cells})")  # fmt: skip
    assert slope in finding.fix


def test_the_shift_set_holds_conclusions_that_change_and_some_that_do_not() -> None:
    severities = {f.severity for _, _, _, found in _audited("shifted") for f in found}
    assert severities == {"critical", "major"}


@pytest.mark.parametrize("index", range(len(GROUPS["shifted_title"])), ids=_ids("shifted_title"))
def test_a_shift_only_a_titles_order_says_is_a_minor_risk(index: int) -> None:
    _, truth, _, findings = _audited("shifted_title")[index]
    assert [(f.kind, f.severity) for f in findings] == [("range-shifted", "minor")]
    assert findings[0].evidence["range_meant"] == truth["words_range"]


@pytest.mark.parametrize("group", ["clean", "ambiguous"])
def test_matching_or_ambiguous_words_draw_no_finding(group: str) -> None:
    audited = _audited(group)
    assert len(audited) >= 12
    assert [(s, [f.message for f in found]) for s, _, _, found in audited if found] == []


def test_the_case_workbook_holds_what_libreoffice_computed() -> None:
    """fixtures/words/axis_words.xlsx was recalculated by LibreOffice: its stored slopes and
    p-values equal the scenario's scipy fits of the ranges the formulas read (truth.json), so
    the stored values the generated tests write are those a spreadsheet stores."""
    folder = ROOT / "fixtures" / "words"
    truth = json.loads((folder / "truth.json").read_text(encoding="utf-8"))
    book = openpyxl.load_workbook(folder / "axis_words.xlsx", data_only=True)
    for sheet, facts in truth.items():
        for key in ("slope", "p_slope"):
            cell = facts["cells"][key].rpartition("!")[2]
            stored = book[sheet][cell].value
            assert _close(float(stored), facts["as_written"][key], rel=1e-9), (sheet, key)


def test_the_fix_formulas_give_the_fit_the_words_describe() -> None:
    """Each finding on the case workbook suggests the slope formula the words describe: the
    project's evaluator computes it on the workbook and it equals scipy's fit (truth.json)."""
    path = ROOT / "fixtures" / "words" / "axis_words.xlsx"
    truth = json.loads((path.parent / "truth.json").read_text(encoding="utf-8"))
    evaluator = Evaluator(read_workbook(path))
    result = audit_workbook(path, load_policy("general"))
    checked = 0
    for finding in result.all_findings():
        if finding.check not in CHECKS:
            continue
        formula = re.search(r"=SLOPE\([^)]*\)", finding.fix)
        assert formula is not None, finding.fix
        sheet = finding.cells[0].rpartition("!")[0]
        value = evaluator.evaluate(formula.group(0), sheet)
        assert _close(value, truth[sheet]["as_words_say"]["slope"], rel=1e-9), sheet
        checked += 1
    assert checked == 5


@pytest.mark.optional
def test_libreoffice_recalculated_scenarios_draw_the_same_findings(tmp_path: Path) -> None:
    """The generated scenarios with their stored values recalculated by LibreOffice (an outside
    engine) draw the same findings, at the same severities, as with scipy's stored values."""
    if shutil.which("soffice") is None and shutil.which("libreoffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    from make_fixtures import recalculate  # noqa: PLC0415 (fixtures/, on the path above)

    groups = ("swapped_units", "shifted", "clean")
    written, done = tmp_path / "written", tmp_path / "done"
    written.mkdir()
    done.mkdir()
    for group in groups:
        book = xlsxwriter.Workbook(str(written / f"{group}.xlsx"))
        for i, scenario in enumerate(GROUPS[group]):
            write_scenario(book, f"S{i}", scenario)
        book.close()
    recalculate(sorted(written.glob("*.xlsx")), done, tmp_path)
    for group in groups:
        result = audit_workbook(done / f"{group}.xlsx", load_policy("general"))
        engine = sorted(
            (f.cells[0], f.kind, f.severity) for f in result.all_findings() if f.check in CHECKS
        )
        ours = sorted(
            (found[0].cells[0], found[0].kind, found[0].severity)
            for _, _, _, found in _audited(group)
            if found
        )
        assert engine == ours, group


# Quantities whose names and units overlap on purpose (shared words, shared units, prefixes,
# abbreviations), drawn at random into clean regressions: the words match the formulas, so no
# combination may draw a finding.
POOL = (
    ("Line speed", "m/min"), ("Line scrap", "%"), ("Scrap rate", "%"), ("Speed", "m/s"),
    ("Temp", "°C"), ("Temperature", "K"), ("Time", "min"), ("Time on line", "h"),
    ("Abs", "AU"), ("Absorbance", "AU"), ("Conc", "mg/L"), ("Concentration", "µg/L"),
    ("Flow", "L/s"), ("Flow rate", "L/min"), ("Load", "t"), ("Fuel", "L"), ("Day", "d"),
    ("Days stored", "d"), ("Height", "cm"), ("Shoot height", "mm"),
)  # fmt: skip


def _clean_topics(count: int) -> list[Scenario]:
    rng = np.random.default_rng(2026)
    words = ("rate", "names", "title", "both", "unit", "slash")
    out = []
    for i in range(count):
        x, y, z = (POOL[j] for j in rng.choice(len(POOL), 3, replace=False))
        topic = Topic("en" if i % 2 else "en2", x, y, z, (1, 20), float(rng.choice([-1, 1])),
                      5.0, 0.8, float(rng.uniform(-0.5, 0.5)), 10.0, 1.0)  # fmt: skip
        orientation = ("columns", "rows")[(i // 2) % 2]
        form = ("slope_family", "index_linest")[(i // 3) % 2]
        wording = words[i % len(words)]
        out.append(
            Scenario(topic, "clean", wording, orientation, form, 100 + i, y_first=i % 3 == 0)
        )
    return out


GROUPS["clean_overlapping"] = _clean_topics(48)


def test_clean_regressions_with_overlapping_names_and_units_draw_nothing() -> None:
    audited = _audited("clean_overlapping")
    found = [
        (s.topic.x, s.topic.y, s.words, [f.message for f in f_]) for s, _, _, f_ in audited if f_
    ]
    assert found == []
