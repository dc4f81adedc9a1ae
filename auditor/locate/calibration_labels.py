"""Calibration figures found by their labels and weights found by what they hold.

* Reported detection and quantitation limits ("LOD", "Limit of detection", "LOQ", "QL", …) and a
  blanks' standard deviation ("SD of blanks", "blank SD"), each the number beside its label near
  the regression (the window the design inputs read).
* Weighted fits built by hand: formulas that SUMPRODUCT over a column of the data rows other than
  x and y; the column's values name the scheme (1/x, 1/x², 1/y, 1/y², 1/s²), and every cell
  downstream of those sums whose value is the weighted slope or intercept is recognised.
* A LINEST over transformed columns (√w, x·√w → y·√w, without intercept): the original x, y and
  weights follow from the columns themselves.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from auditor.extract.record import Extracted
from auditor.fit.calibration import FloatArray, fit_line
from auditor.fit.weights import recognise_scheme
from auditor.formula.syntax import Call, Node, RefNode, walk
from auditor.grid import column_letter
from auditor.locate.calibration_cells import CellKey, CurveReader
from auditor.locate.roles import role_from_label
from auditor.read.workbook import Workbook

_LOD = re.compile(r"^\s*(lod|lo\.d\.|limit of detection|detection limit|dl)\b", re.I)
_LOQ = re.compile(
    r"^\s*(loq|lo\.q\.|limit of quantit?ation|limit of quantification|"
    r"quantit?ation limit|quantification limit|ql)\b",
    re.I,
)
_BLANK_SD = re.compile(r"blank", re.I)
_SD_WORD = re.compile(r"\b(sd|s\.d\.|stdev|std\.?\s*dev\w*|standard deviation|σ|sigma|s)\b", re.I)
DOWNSTREAM_STEPS = 3
# A hand-built weighted slope sums products of large and small numbers: agreement to 1e-6
# relative (regaudit judgement), looser than a stored value's 1e-9.
WEIGHTED_TOLERANCE = 1e-6


@dataclass(frozen=True)
class LabelledFigure:
    cell: str
    label: str
    reported: float
    typed: bool  # a typed constant (judged at its shown digits) rather than a formula
    number_format: str


@dataclass(frozen=True)
class WeightedCell:
    cell: str
    scheme: str
    key: str  # "slope" | "intercept"
    reported: float
    intended: float
    matches: bool
    label: str


@dataclass(frozen=True)
class Curve:
    """The calibration data as the curve uses them: x, y and the weights (None: unweighted)."""

    x: FloatArray
    y: FloatArray
    weights: FloatArray | None
    scheme: str  # "none" or the weighting scheme
    how: str  # in words


def labelled_figures(
    reader: CurveReader, texts: list[tuple[str, str]]
) -> tuple[list[LabelledFigure], list[LabelledFigure], LabelledFigure | None]:
    """LOD cells, LOQ cells and the blanks' SD near the regression (nearest first)."""
    lods: list[LabelledFigure] = []
    loqs: list[LabelledFigure] = []
    blank: LabelledFigure | None = None
    taken: set[str] = set()
    for text, address in texts:
        kind = "lod" if _LOD.search(text) else "loq" if _LOQ.search(text) else None
        if kind is None and not (_BLANK_SD.search(text) and _SD_WORD.search(text)):
            continue
        figure = _beside(reader, address, text)
        if figure is None or figure.cell in taken:
            continue
        taken.add(figure.cell)
        if kind == "lod":
            lods.append(figure)
        elif kind == "loq":
            loqs.append(figure)
        elif blank is None:
            blank = figure
    return lods, loqs, blank


def _beside(reader: CurveReader, address: str, label: str) -> LabelledFigure | None:
    sheet_name, _, coord = address.rpartition("!")
    letters = coord.rstrip("0123456789")
    row = int(coord[len(letters) :])
    col = 0
    for letter in letters.upper():
        col = col * 26 + ord(letter) - 64
    for dr, dc in ((0, 1), (0, 2), (1, 0)):
        cell = reader.workbook.cell(sheet_name, row + dr, col + dc)
        if cell is None or cell.value is None:
            continue
        value = reader.value_of((cell.sheet.lower(), cell.row, cell.col))
        if value is None:
            return None
        return LabelledFigure(cell.address, label, value, not cell.formula, cell.number_format)
    return None


def weighted_cells(reader: CurveReader, data: Extracted) -> list[WeightedCell]:
    """Hand-built weighted fits over this regression's rows, recognised and recomputed."""
    spec, workbook = reader.spec, reader.workbook
    used = [p for p in data.points if p.used]
    if spec.x_columns != 1 or len(used) < 3:
        return []
    rows = [p.row for p in used]
    x = np.array([p.x[0] for p in used], dtype=float)
    y = np.array([p.y for p in used], dtype=float)
    sums: dict[int, set[CellKey]] = {}  # weight column -> cells summing over it
    for key, node in reader.parsed.items():
        for column in _weight_columns(node, reader):
            sums.setdefault(column, set()).add((key[0].lower(), key[1], key[2]))
    found: list[WeightedCell] = []
    for column, cells in sorted(sums.items()):
        weights = [reader.value_of((spec.y.sheet.lower(), r, column)) for r in rows]
        if any(w is None for w in weights):
            continue
        w = np.array(weights, dtype=float)
        scheme = recognise_scheme(w, x, y)
        if scheme is None:
            continue
        line = fit_line(x, y, w)
        intended = {"slope": line.slope, "intercept": line.intercept}
        for key in sorted(_downstream(reader.parsed, cells)):
            value = reader.value_of(key)
            if value is None:
                continue
            label = _label_left(workbook, key)
            role = role_from_label(label) if label else None
            for name, truth in intended.items():
                matches = abs(value - truth) <= WEIGHTED_TOLERANCE * abs(truth)
                if matches or role == name:
                    address = f"{_sheet_name(workbook, key[0])}!{_coord(key)}"
                    found.append(WeightedCell(address, scheme, name, value, truth, matches, label))
                    break
    return found


def _weight_columns(node: Node, reader: CurveReader) -> set[int]:
    spec = reader.spec
    columns: set[int] = set()
    for sub in walk(node):
        if not (isinstance(sub, Call) and sub.name == "SUMPRODUCT"):
            continue
        refs = [a.ref for a in sub.args if isinstance(a, RefNode)]
        same_rows = [
            r
            for r in refs
            if r.sheet.lower() == spec.y.sheet.lower()
            and r.c1 == r.c2
            and r.r1 <= spec.y.r2
            and spec.y.r1 <= r.r2
        ]
        for ref in same_rows:
            if ref.c1 not in (spec.x.c1, spec.y.c1):
                columns.add(ref.c1)
    return columns


def _downstream(parsed: Mapping[tuple[str, int, int], Node], start: set[CellKey]) -> set[CellKey]:
    reached = set(start)
    frontier = set(start)
    for _ in range(DOWNSTREAM_STEPS):
        step = set()
        for key, node in parsed.items():
            lowered = (key[0].lower(), key[1], key[2])
            if lowered in reached:
                continue
            for sub in walk(node):
                if isinstance(sub, RefNode) and sub.ref.is_cell:
                    if (sub.ref.sheet.lower(), sub.ref.r1, sub.ref.c1) in frontier:
                        step.add(lowered)
                        break
        reached |= step
        frontier = step
    return reached


def _label_left(workbook: Workbook, key: CellKey) -> str:
    for dc in (1, 2):
        cell = workbook.cell(key[0], key[1], key[2] - dc)
        if cell is not None and isinstance(cell.value, str) and not cell.formula:
            return cell.value.strip()
    return ""


def _sheet_name(workbook: Workbook, lowered: str) -> str:
    sheet = workbook.sheet(lowered)
    return sheet.name if sheet is not None else lowered


def _coord(key: CellKey) -> str:
    return f"{column_letter(key[2])}{key[1]}"


def curve_of(data: Extracted, intercept: bool, x_columns: int) -> Curve | None:
    """The calibration data of a regression: its own x and y, or, for a LINEST without intercept
    over two transformed columns (√w and x·√w), the x, y and weights they encode."""
    x_all, y = np.asarray(data.x, dtype=float), np.asarray(data.y, dtype=float)
    if x_all.ndim == 1:
        x_all = x_all.reshape(-1, 1)
    if x_columns == 1 and intercept:
        return Curve(x_all[:, 0], y, None, "none", "unweighted least squares")
    if x_columns != 2 or intercept or y.size < 3:
        return None
    for root_col, x_col in ((0, 1), (1, 0)):
        root = x_all[:, root_col]
        if not np.all(np.isfinite(root)) or np.any(root <= 0):
            continue
        x, yy, w = x_all[:, x_col] / root, y / root, root**2
        scheme = recognise_scheme(w, x, yy)
        if scheme is not None and np.unique(x).size >= 3 and math.isfinite(float(x.sum())):
            return Curve(x, yy, w, scheme, f"{scheme} weighting by LINEST over √w-scaled columns")
    return None
