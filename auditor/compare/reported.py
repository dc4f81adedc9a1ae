"""The three values of every reported statistic, and the verdict on them.

*reported* is what the author saw (the stored value, the typed constant, or a text claim; for a
file with no stored values, the tool's own evaluation, said so in ``source``); *as written* is
what the cell's formula computes now; *intended* is the independent fit over the intended table.
"""

from __future__ import annotations

import math

from auditor.compare.conditioning import agree_conditioned
from auditor.compare.precision import (
    Agreement,
    agree_stored,
    agree_text,
    agree_typed,
    parse_text_number,
)
from auditor.evaluation.evaluator import Evaluator, Unsupported
from auditor.fit.conditioning import Conditioning
from auditor.locate.locator import RegressionSpec, StatCell
from auditor.locate.pasted_spec import judge_pasted
from auditor.locate.typed_spec import place_only_link
from auditor.model import ReportedValue, stat_base
from auditor.read.workbook import ErrorValue

INTEGER_KEYS = ("df", "n")


def _as_float(value: object) -> float | None:
    if isinstance(value, bool) or value is None:
        return None
    if isinstance(value, (int, float)):
        return float(value) if math.isfinite(float(value)) else None
    return None


def _scale_for(key: str, stats: dict[str, float | int | None]) -> float | None:
    """An absolute floor for values that may be near 0 (an intercept through the data's origin)."""
    if key.startswith("intercept") or key.startswith("t_intercept"):
        slope = stats.get("slope")
        return abs(float(slope)) if isinstance(slope, (int, float)) else None
    return None


# Statistics built on the residual sum of squares lose digits when the fit is nearly perfect:
# SSE = SST − SSR cancels, so a spreadsheet's one-pass STEYX carries a relative error of about
# eps / (1 − R²) (measured: LibreOffice's STEYX off by 1.5e-9 relative at 1 − R² ≈ 1e-7).
RESIDUAL_BASED = (
    "residual_sd",
    "se_slope",
    "se_intercept",
    "t_slope",
    "t_intercept",
    "ss_residual",
    "f",
    "ci_slope_low",
    "ci_slope_high",
)
CANCELLATION_FACTOR = 50 * 2.220446049250313e-16  # 50 × double-precision epsilon


def relative_tolerance(key: str, base: float, intended: dict[str, float | int | None]) -> float:
    """The stored-value tolerance for one statistic, widened where the engine's arithmetic
    cannot be better than the conditioning of the fit allows."""
    name = stat_base(key).split("[")[0]
    r_squared = intended.get("r_squared")
    if not isinstance(r_squared, (int, float)) or not 0 <= r_squared < 1:
        return base
    widened = CANCELLATION_FACTOR / (1.0 - float(r_squared))
    if name.startswith("p_"):
        # A relative error d in t moves p by about (df + 1)·d relative in the tail.
        df = intended.get("df")
        widened *= (float(df) + 1.0) if isinstance(df, (int, float)) else 1.0
    elif name not in RESIDUAL_BASED:
        return base
    return max(base, widened)


def as_written_value(evaluator: Evaluator, stat: StatCell) -> tuple[float | None, str]:
    """What the cell's formula computes now; a note says why it could not be computed."""
    if stat.cell.formula is None:
        return None, ""
    try:
        value = evaluator.cell_value(stat.cell.sheet, stat.cell.row, stat.cell.col)
    except Unsupported as exc:
        return None, f"not evaluated: {exc}"
    if isinstance(value, ErrorValue):
        return None, f"the formula gives {value.code}"
    number = _as_float(value)
    return number, "" if number is not None else f"the formula gives {value!r}"


def judge(
    reported: float | str | None,
    true: float | None,
    source: str,
    number_format: str,
    rel: float,
    scale: float | None = None,
    key: str = "",
    conditioning: Conditioning | None = None,
) -> Agreement:
    if true is None or reported is None:
        return Agreement(None, "no value to compare", None)
    if isinstance(reported, str):
        return agree_text(reported, true)
    if source == "typed":
        return agree_typed(float(reported), true, number_format)
    if conditioning is not None:
        return agree_conditioned(float(reported), true, key, rel, scale, conditioning)
    return agree_stored(float(reported), true, rel=rel, scale=scale)


def build_reported(
    spec: RegressionSpec,
    evaluator: Evaluator,
    intended: dict[str, float | int | None],
    stored_values: bool,
    rel: float,
    conditioning: Conditioning | None = None,
) -> dict[str, ReportedValue]:
    out: dict[str, ReportedValue] = {}
    for key, stat in spec.stats.items():
        cell = stat.cell
        as_written, note = as_written_value(evaluator, stat)
        raw = cell.value
        if stat.typed_value is not None:  # a constant typed inside the formula
            as_written = None
            note = (
                f"typed into the formula {cell.formula}"
                if cell.formula
                else f"written in the text {cell.value!r}"
            )
            raw = stat.typed_value
        if cell.formula is None or stat.typed_value is not None:
            source = "text" if isinstance(raw, str) else "typed"
            value: float | str | None = raw if isinstance(raw, str) else _as_float(raw)
            if isinstance(raw, str) and parse_text_number(raw) is not None:
                source = "text"
        elif not stored_values:
            source, value = "evaluated", as_written
            note = note or "the file carries no stored values: reported = the tool's evaluation"
        else:
            source = "stored"
            value = raw if isinstance(raw, str) else _as_float(raw)
            if isinstance(raw, ErrorValue):
                value, note = str(raw), f"the cell shows {raw.code}"
        true = intended.get(key, intended.get(stat_base(key)))  # a full key names its own
        true_f = float(true) if isinstance(true, (int, float)) else None
        tolerance = relative_tolerance(key, rel, intended)
        shown_format = "General" if stat.typed_value is not None else cell.number_format
        agreement = judge(
            value,
            true_f,
            source,
            shown_format,
            tolerance,
            _scale_for(key, intended),
            key,
            conditioning,
        )
        if spec.pasted is not None and isinstance(value, float) and true_f is not None:
            table = spec.pasted.table
            agreement, source = judge_pasted(
                key, value, true_f, cell.number_format, table, conditioning
            )
        if isinstance(raw, ErrorValue) and true_f is not None:
            verdict = "mismatch"
        elif agreement.agrees is None:
            verdict = "unverifiable"
        else:
            verdict = "confirmed" if agreement.agrees else "mismatch"
        known = bool(stat.computes.get("reading"))  # a recogniser reproduced what it computes
        if (
            verdict == "mismatch"
            and cell.formula
            and note.startswith("not evaluated")
            and not known
        ):
            # What the formula computes is unknown (=PRODUCT(SLOPE(…),100) is a slope per 100):
            # a value that differs from the statistic is no evidence of a mistake.
            verdict = "unverifiable"
        if verdict == "mismatch" and (why := place_only_link(spec)):
            verdict, note = "unverifiable", why  # only place or words tie the table to its data
        out[key] = ReportedValue(
            key=key,
            cell=cell.address,
            value=value,
            formula=cell.formula,
            as_written=as_written,
            intended=true_f,
            verdict=verdict,  # type: ignore[arg-type]
            tolerance=agreement.tolerance,
            source=source,
            note=note,
        )
    return out
