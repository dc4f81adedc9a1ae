"""Typed copies found as text: a trendline label copied into a cell ("y = 1.49x + 21.9")."""

from __future__ import annotations

import re

from auditor.locate.spec import RegressionSpec
from auditor.locate.text_cells import text_cells
from auditor.locate.trendline_figures import (
    MIN_DIGITS_ALONE,
    MIN_DIGITS_PAIRED,
    TrendFigures,
    matches,
    put_copy,
    significant_digits,
)
from auditor.read.workbook import Cell, Workbook

NUMBER_TEXT = r"[-\u2212]?\s*\d[\d,]*(?:\.\d+)?(?:[eE][-+]?\d+)?"
EQUATION = re.compile(
    rf"\by\s*=\s*(?P<slope>{NUMBER_TEXT})\s*\*?\s*x\b(?:\s*(?P<sign>[-+\u2212])\s*"
    rf"(?P<intercept>\d[\d,]*(?:\.\d+)?(?:[eE][-+]?\d+)?))?",
    re.I,
)
R_SQUARED = re.compile(rf"\bR\s*(?:\u00b2|\^?2)\s*=\s*(?P<r2>{NUMBER_TEXT})", re.I)


def _text_number(text: str) -> float:
    return float(text.replace("\u2212", "-").replace(",", "").replace(" ", ""))


def equation_texts(workbook: Workbook) -> list[tuple[Cell, dict[str, float]]]:
    """Text cells holding a trendline label copied as text: "y = 1.49x + 21.9", "R² = 0.88"."""
    found: list[tuple[Cell, dict[str, float]]] = []
    for sheet in workbook.sheets.values():
        for cell in text_cells(workbook, sheet):
            if cell.formula is not None or not isinstance(cell.value, str) or "=" not in cell.value:
                continue
            typed: dict[str, float] = {}
            equation = EQUATION.search(cell.value)
            if equation:
                typed["slope"] = _text_number(equation.group("slope"))
                if equation.group("intercept"):
                    sign = -1.0 if equation.group("sign") in ("-", "\u2212") else 1.0
                    typed["intercept"] = sign * _text_number(equation.group("intercept"))
            r_squared = R_SQUARED.search(cell.value)
            if r_squared:
                typed["r_squared"] = _text_number(r_squared.group("r2"))
            if typed:
                found.append((cell, typed))
    return found


def attach_equation(
    spec: RegressionSpec,
    cell: Cell,
    typed: dict[str, float],
    found: TrendFigures,
    shown: set[str],
) -> None:
    """A label copied as text belongs to the trendline when one of its figures agrees at its
    digits (four significant digits at least, or two figures); then every figure it holds is a
    reported value, so a wrong one is judged."""
    truth = {"slope": found.slope, "intercept": found.intercept, "r_squared": found.r_squared}
    keys = [key for key in typed if key in shown]
    agreeing = [key for key in keys if matches(typed[key], truth[key])]
    needed = MIN_DIGITS_PAIRED if len(agreeing) > 1 else MIN_DIGITS_ALONE
    if not any(significant_digits(typed[key]) >= needed for key in agreeing):
        return
    for key in keys:
        put_copy(spec, key, cell, typed[key])
