"""The record of a regression's data (:class:`Extracted`), the reader extraction goes through,
and how one cell reads as a number of the intended table."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from auditor.compare.precision import parse_text_number
from auditor.evaluation.evaluator import Evaluator
from auditor.extract.fallback import StoredFallback
from auditor.grid import column_letter
from auditor.model import DataPoint
from auditor.read.workbook import ErrorValue

Reader = Evaluator | StoredFallback  # what extraction reads cells through


@dataclass
class Extracted:
    x: np.ndarray  # (n, k) intended
    y: np.ndarray  # (n,)
    points: list[DataPoint]
    intended_x_range: str
    intended_y_range: str
    dropped: list[tuple[str, str]] = field(default_factory=list)  # (cell, why)
    parsed: list[tuple[str, str]] = field(default_factory=list)  # (cell, what was parsed)
    total_rows: list[int] = field(default_factory=list)
    n_as_written: int = 0  # pairs the author's SLOPE-family formulas see
    taken_as_stored: list[tuple[str, str]] = field(default_factory=list)  # (cell, why)

    @property
    def n(self) -> int:
        return int(self.y.shape[0])


def cell_number(value: object) -> tuple[float | None, str]:
    """A cell value as a number for the intended table, and a note when it was not plain."""
    if isinstance(value, bool):
        return None, "a logical value"
    if isinstance(value, (int, float)):
        return float(value), ""
    if isinstance(value, ErrorValue):
        return None, f"an error value {value.code}"
    if isinstance(value, str):
        parsed = parse_text_number(value)
        if parsed is not None:
            return parsed, f"number stored as text {value!r}"
        return None, f"text {value!r}"
    return None, "empty"


def range_text(sheet: str, c1: int, r1: int, c2: int, r2: int) -> str:
    return f"{sheet}!{column_letter(c1)}{r1}:{column_letter(c2)}{r2}"
