"""Knowing the job: calibration curves recognised by their words and layout over generated variety
(seeded choices of wording style, language, title, replicates, read-backs), and regressions of
other jobs left to the general policy. The answer key is the generator's own choice of job."""

from __future__ import annotations

import random

import numpy as np
import pytest

from auditor.formula.syntax import Ref
from auditor.locate.job import AUTO, decide, judge_signs, read_signs
from auditor.read.workbook import Cell, Sheet, Workbook

# Header pairs (x, y) in several styles; the generator composes them with the other choices.
CALIBRATION_HEADERS = [
    ("Conc (mg/L)", "Abs"),
    ("Concentration of standard, µg/mL", "Absorbance at 540 nm"),
    ("Std", "Response"),
    ("Nominal (ng/mL)", "Peak area ratio"),
    ("Standard level (ppb)", "Intensity (cps)"),
    ("Konzentration (mg/L)", "Extinktion"),
    ("Concentración (mg/L)", "Señal"),
    ("mg/L", "Signal (mV)"),
    ("Spiked amount (µg/L)", "Peak height"),
    ("Calibrant (mmol)", "Fluorescence (RFU)"),
]
OTHER_HEADERS = [
    ("Outdoor temperature (°C)", "Energy (kWh)"),
    ("Line speed (m/min)", "Scrap (%)"),
    ("Hours since calibration", "Response (mV·s)"),  # a drift check: x is time
    ("Dose (mg/kg)", "Weight gain (g)"),  # a unit alone is not a standard
    ("Months on storage", "Assay (% of label)"),
    ("Fertiliser (kg/ha)", "Yield (t/ha)"),
    ("Advertising spend", "Sales"),
    ("Shift length (h)", "Defect rate"),
]
TITLES = ["", "Calibration curve, run 12", "Linearity of the method", "Results"]


def _book(
    x_head: str, y_head: str, x: list[float], y: list[float], title: str
) -> tuple[Workbook, Ref, Ref]:
    sheet = Sheet("Data")

    def put(row: int, col: int, value: object) -> None:
        sheet.cells[(row, col)] = Cell("Data", row, col, value)  # type: ignore[arg-type]

    if title:
        put(1, 1, title)
    put(3, 1, x_head)
    put(3, 2, y_head)
    for i, (xv, yv) in enumerate(zip(x, y, strict=True)):
        put(4 + i, 1, xv)
        put(4 + i, 2, yv)
    sheet.max_row, sheet.max_col = 3 + len(x), 2
    book = Workbook("generated.xlsx", "", {"Data": sheet}, [], True)
    last = 3 + len(x)
    return book, Ref("Data", 4, 1, last, 1), Ref("Data", 4, 2, last, 2)


def _generated(seed: int) -> tuple[bool, Workbook, Ref, Ref, bool]:
    """One generated regression and its job (the answer key), from seeded choices."""
    rng = random.Random(seed)
    calibration = rng.random() < 0.5
    x_head, y_head = rng.choice(CALIBRATION_HEADERS if calibration else OTHER_HEADERS)
    if rng.random() < 0.3:
        x_head, y_head = x_head.upper(), y_head.lower()  # wording style
    levels = sorted(rng.sample([0, 0.5, 1, 2, 5, 10, 20, 50, 100], rng.randint(4, 8)))
    replicates = rng.choice([1, 2, 3]) if calibration else rng.choice([1, 1, 2])
    x = [float(v) for v in levels for _ in range(replicates)]
    if not calibration and rng.random() < 0.5:
        rng.shuffle(x)  # observational data come in any order
    y = [0.01 + 0.3 * v + rng.gauss(0, 0.01) for v in x]
    title = rng.choice(TITLES if calibration else ["", "Results", "Trend review"])
    book, xr, yr = _book(x_head, y_head, x, y, title)
    reads_back = calibration and rng.random() < 0.4
    return calibration, book, xr, yr, reads_back


@pytest.mark.parametrize("seed", range(120))
def test_generated_jobs_are_recognised(seed: int) -> None:
    calibration, book, xr, yr, reads_back = _generated(seed)
    x = [book.cell("Data", r, 1).value for r in range(xr.r1, xr.r2 + 1)]  # type: ignore[union-attr]
    signs = read_signs(book, xr, yr, np.array(x, dtype=float), [], reads_back)
    decision = decide(AUTO, signs)
    assert decision.is_calibration == calibration, (signs, decision.why)
    assert decision.policy == ("calibration" if calibration else "general")


def test_the_reason_quotes_the_words() -> None:
    book, xr, yr = _book("Conc (mg/L)", "Absorbance", [0, 1, 1, 2, 2, 5, 5], [0.0] * 7, "")
    signs = read_signs(book, xr, yr, np.array([0, 1, 1, 2, 2, 5, 5.0]))
    decision = decide(AUTO, signs)
    assert decision.why.startswith("a calibration curve: x header says 'Conc', 'mg/L'")
    assert "y header says 'Absorbance'" in decision.why
    assert "4 ascending levels, 3 of them replicated" in decision.why


def test_an_explicit_policy_wins_and_says_what_the_words_say() -> None:
    book, xr, yr = _book("Conc (mg/L)", "Absorbance", [0, 1, 2, 5], [0.0] * 4, "")
    signs = read_signs(book, xr, yr, np.array([0, 1, 2, 5.0]))
    decision = decide("general", signs)
    assert decision.policy == "general"
    assert decision.is_calibration
    assert decision.why == "policy 'general' given; the words: looks like a calibration curve"


def test_time_on_x_is_a_trend_even_beside_calibration_words() -> None:
    book, xr, yr = _book("Hours since calibration", "Response", [0, 2, 4, 6], [1.0] * 4, "")
    signs = read_signs(book, xr, yr, np.array([0, 2, 4, 6.0]), ["Calibration check"], True)
    is_calibration, evidence = judge_signs(signs)
    assert not is_calibration
    assert evidence.startswith("x is time ('Hours since calibration')")


def test_one_axis_needs_a_second_sign() -> None:
    book, xr, yr = _book("Standard", "Value", [0, 1, 2, 5], [0.0] * 4, "")
    alone = read_signs(book, xr, yr, np.array([0, 1, 2, 5.0]))
    assert not judge_signs(alone)[0]
    with_read_back = read_signs(book, xr, yr, np.array([0, 1, 2, 5.0]), [], True)
    assert judge_signs(with_read_back)[0]
