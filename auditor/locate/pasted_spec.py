"""Pasted tables as regressions: the spec, the intended values of every number the table holds,
how a pasted number is judged, and the result of a table whose data were not found.

A pasted number is usually the full double the add-in computed. Another engine's arithmetic on
the same data agrees with it to about 1e-12 relative, but tables computed on ill-conditioned data
(log columns, large offsets) or p-values in the far tail lose a few more digits, so agreement is
judged at 1e-7 relative: tight enough that any edit of the data or of the number shows, loose
enough for engine differences. A number retyped with few digits is judged at the digits it shows.
"""

from __future__ import annotations

import math
import weakref

import numpy as np

from auditor.compare.conditioning import agree_conditioned
from auditor.compare.precision import Agreement, agree_typed
from auditor.fit.conditioning import Conditioning
from auditor.fit.distributions import t_ppf
from auditor.fit.ols import FitResult
from auditor.formula.syntax import Ref
from auditor.locate.formulas import FormulaLocator
from auditor.locate.pasted_record import PastedTable
from auditor.locate.pasted_source import DataIndex, PastedOrigin, find_source
from auditor.locate.pasted_tables import find_tables
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.model import RegressionResult, ReportedValue
from auditor.read.workbook import Workbook

PASTED_RELATIVE = 1e-7
FULL_DOUBLE_DIGITS = 10  # a number showing this many significant digits was pasted, not typed


def find(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """The recogniser: every pasted table whose cells no other recogniser took."""
    return pasted_specs(locator.workbook, taken)


_TABLES: weakref.WeakKeyDictionary[Workbook, list[PastedTable]] = weakref.WeakKeyDictionary()


def tables_of(workbook: Workbook) -> list[PastedTable]:
    """The pasted tables of a workbook, recognised once per workbook object."""
    if workbook not in _TABLES:
        _TABLES[workbook] = find_tables(workbook)
    return _TABLES[workbook]


def in_pasted_table(workbook: Workbook, sheet: str, row: int, col: int) -> bool:
    """Whether a cell belongs to a pasted table (its numbers, labels or residual output): such a
    cell is never another regression's reported value."""
    return any(t.sheet == sheet and (row, col) in t.footprint for t in tables_of(workbook))


def pasted_specs(workbook: Workbook, taken: set[str]) -> list[RegressionSpec]:
    """One spec per pasted table not already claimed by another recogniser."""
    tables = [
        t for t in tables_of(workbook) if not any(c.address in taken for c in t.cells.values())
    ]
    if not tables:
        return []
    index = DataIndex.build(workbook, tables)
    specs = []
    for table in tables:
        source = find_source(workbook, table, index)
        anchor = table.anchor
        placeholder = Ref(table.sheet, anchor.row, anchor.col, anchor.row, anchor.col)
        spec = RegressionSpec(
            f"{table.sheet}/{anchor.coord}",
            table.sheet,
            source.x or placeholder,
            source.y or placeholder,
            table.intercept,
            "pasted-table",
        )
        for key, cell in table.cells.items():
            spec.stats[key] = StatCell(key, cell, "pasted-table")
        names = [name for name in table.x_labels if name]
        what = " and ".join(names[:3]) + (" …" if len(names) > 3 else "")
        spec.label = f"pasted table: {table.y_label or 'y'} on {what or f'{table.k} x'}"
        spec.pasted = PastedOrigin(table, source)
        specs.append(spec)
    return specs


def origin(spec: RegressionSpec) -> PastedOrigin | None:
    found = getattr(spec, "pasted", None)
    return found if isinstance(found, PastedOrigin) else None


def pasted_intended(spec: RegressionSpec, fit: FitResult) -> dict[str, float | int | None]:
    """Intended values for the numbers a pasted table holds beyond the common statistics."""
    found = origin(spec)
    if found is None or fit.status not in ("ok", "perfect-fit"):
        return {}
    table = found.table
    out: dict[str, float | int | None] = {
        "multiple_r": math.sqrt(fit.r_squared) if fit.r_squared >= 0 else None,
        "df_regression": fit.k,
        "df_total": fit.n - 1 if fit.intercept else fit.n,
        "ss_total": fit.ss_regression + fit.ss_residual,
        "ms_regression": fit.ss_regression / fit.k,
        "ms_residual": fit.ss_residual / fit.df if fit.df > 0 else None,
        "f_p": fit.f_p,
        # The add-ins' adjusted R² through the origin is their own convention: not judged.
        "adj_r_squared": fit.adj_r_squared if fit.intercept else None,
    }
    coefficients = [("intercept", fit.intercept_value, fit.se_intercept)] if fit.intercept else []
    for j, (b, se) in enumerate(zip(fit.slopes, fit.se_slopes, strict=True), start=1):
        coefficients.append((f"slope{'' if fit.k == 1 else f'[{j}]'}", float(b), float(se)))
    for pair, level in enumerate(table.levels):
        tag = "" if pair == 0 else f"@{level * 100:g}%"
        multiplier = math.nan
        if fit.df > 0:
            multiplier = float(t_ppf(0.5 + level / 2.0, fit.df))
        for name, b, se in coefficients:
            base, _, column = name.partition("[")
            column = f"[{column}" if column else ""
            half = multiplier * (se if se is not None else math.nan)
            out[f"ci_{base}_low{column}{tag}"] = b - half
            out[f"ci_{base}_high{column}{tag}"] = b + half
    return {key: value for key, value in out.items() if key in spec.stats}


def _significant_digits(value: float) -> int:
    mantissa = repr(abs(value)).partition("e")[0].replace(".", "").lstrip("0")
    return len(mantissa.rstrip("0")) if "." in repr(abs(value)) else len(mantissa)


def judge_pasted(
    key: str,
    reported: float,
    true: float,
    number_format: str,
    table: PastedTable,
    conditioning: Conditioning | None = None,
) -> tuple[Agreement, str]:
    """A pasted number at 1e-7 relative (floors for values that are 0 up to rounding); a number
    retyped with few digits at the digits it shows. Returns the agreement and the source."""
    if _significant_digits(reported) < FULL_DOUBLE_DIGITS and not float(reported).is_integer():
        return agree_typed(reported, true, number_format), "typed"
    # An ill-conditioned fit leaves any engine fewer digits: the allowance widens with it.
    agreement = agree_conditioned(
        reported, true, key, PASTED_RELATIVE, _floor(key, table), conditioning
    )
    return agreement, "pasted"


def _floor(key: str, table: PastedTable) -> float | None:
    """The size below which a difference is rounding: a coefficient near 0 is judged against
    its standard error, a p-value against the smallest double, a t or R² in absolute terms."""
    base = key.split("@")[0]
    name, _, column = base.partition("[")
    j = int(column.rstrip("]")) if column else (0 if "intercept" in name else 1)
    se = table.standard_errors[j] if j < len(table.standard_errors) else None
    if name.startswith(("intercept", "slope", "ci_", "se_")) and se:
        return se
    if name.startswith("p_") or name == "f_p":
        return 1e-300 / PASTED_RELATIVE
    if name.startswith("t_") or name in ("adj_r_squared", "r_squared", "multiple_r", "f"):
        return 1.0
    return None


def unsourced_result(spec: RegressionSpec) -> RegressionResult | None:
    """The result of a pasted table whose data were not found: listed, every number
    unverifiable; the check table-source-missing says what was searched. Never an alarm."""
    found = origin(spec)
    if found is None or found.source.status != "none":
        return None
    reported = unverifiable_values(spec, f"no source found: {found.source.searched}", "pasted")
    return RegressionResult(
        id=spec.id,
        sheet=spec.sheet,
        x_range="(no source found)",
        y_range="(no source found)",
        found_by="pasted-table",
        n=found.table.n,
        intercept=found.table.intercept,
        x_columns=found.table.k,
        reported=reported,
        label=spec.label,
    )


def unverifiable_values(spec: RegressionSpec, why: str, source: str) -> dict[str, ReportedValue]:
    """Every reported value of a table whose data were not found: unverifiable, and why."""
    return {
        key: ReportedValue(
            key=key,
            cell=stat.cell.address,
            value=_number(stat.cell.value),
            formula=None,
            verdict="unverifiable",
            tolerance="",
            source=source,
            note=why,
        )
        for key, stat in spec.stats.items()
    }


def _number(value: object) -> float | str | None:
    if isinstance(value, bool) or value is None:
        return None
    if isinstance(value, (int, float)):
        return float(value) if math.isfinite(float(value)) else None
    return str(value)


def stored_columns(workbook: Workbook, spec: RegressionSpec) -> tuple[np.ndarray, np.ndarray]:
    """The found data as the table saw them: stored values, columns or rows, no extension."""
    found = origin(spec)
    by_rows = found is not None and spec.y.r1 == spec.y.r2 and spec.y.c2 > spec.y.c1

    def grid(ref: Ref) -> np.ndarray:
        sheet = workbook.sheet(ref.sheet)
        values = [
            [
                _as_float(sheet.value(r, c) if sheet is not None else None)
                for c in range(ref.c1, ref.c2 + 1)
            ]
            for r in range(ref.r1, ref.r2 + 1)
        ]
        return np.array(values, dtype=float)

    x, y = grid(spec.x), grid(spec.y)
    if by_rows:
        x, y = x.T, y.T
    return x, y.reshape(-1)


def _as_float(value: object) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return math.nan
    return float(value)
