"""A trendline's figures as its chart label shows them, and the rule that a typed copy agrees."""

from __future__ import annotations

from dataclasses import dataclass

from auditor.compare.precision import agree_typed
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.read.workbook import Cell

MIN_DIGITS_ALONE = 4
MIN_DIGITS_PAIRED = 3
FollowKey = tuple[str, int, int]


@dataclass(frozen=True)
class TrendFigures:
    """What the chart's label shows for one series, computed from the plotted points."""

    slope: float
    intercept: float
    r_squared: float | None
    y_span: float
    x_low: float
    x_high: float


def significant_digits(value: float) -> int:
    """Digits a typed constant carries: 21.914 → 5, 0.047 → 2, 2000 → 1."""
    mantissa = repr(abs(value)).partition("e")[0]
    whole, _, fraction = mantissa.partition(".")
    if fraction == "0":
        fraction = ""
    digits = (whole + fraction).lstrip("0")
    return len(digits if fraction else digits.rstrip("0"))


def figures(xs: list[float], ys: list[float], intercept: bool) -> TrendFigures | None:
    """Least-squares slope, intercept and R² of the plotted points (closed form)."""
    n = len(xs)
    if n < 2:
        return None
    if intercept:
        x_mean, y_mean = sum(xs) / n, sum(ys) / n
        sxx = sum((x - x_mean) ** 2 for x in xs)
        if sxx == 0:
            return None
        slope = sum((x - x_mean) * (y - y_mean) for x, y in zip(xs, ys, strict=True)) / sxx
        b0 = y_mean - slope * x_mean
        total = sum((y - y_mean) ** 2 for y in ys)
    else:
        sxx = sum(x * x for x in xs)
        if sxx == 0:
            return None
        slope = sum(x * y for x, y in zip(xs, ys, strict=True)) / sxx
        b0 = 0.0
        total = sum(y * y for y in ys)
    residual = sum((y - b0 - slope * x) ** 2 for x, y in zip(xs, ys, strict=True))
    r_squared = 1.0 - residual / total if total > 0 else None
    return TrendFigures(slope, b0, r_squared, max(ys) - min(ys), min(xs), max(xs))


def put_copy(spec: RegressionSpec, key: str, cell: Cell, value: float) -> None:
    """Record a typed copy of a figure as a statistic cell of the regression (once per cell)."""
    if any(s.cell.address == cell.address and s.key == key for s in spec.stats.values()):
        return
    name = key if key not in spec.stats else f"{key}@{cell.address}"
    stat = StatCell(key, cell, "trendline-copy")
    if cell.formula is not None or isinstance(cell.value, str):
        stat.typed_value = value  # a number inside a formula or a text, not the cell's value
    spec.stats[name] = stat


def matches(value: float, true: float | None) -> bool:
    """A typed value agrees with the true figure at the digits it shows."""
    if true is None:
        return False
    return bool(agree_typed(value, true).agrees)
