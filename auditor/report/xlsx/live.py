"""The "recomputed here" and "design" sections of a detail sheet.

Both have the same columns: the name, regaudit's value (a fixed number), the same quantity as a
live formula over the snapshot (stored with regaudit's value), a live agreement check, and the
formula as text so that a printout shows how each number was computed.
"""

from __future__ import annotations

import json

from xlsxwriter.utility import xl_rowcol_to_cell

from auditor.model import RegressionResult
from auditor.report.common import (
    MISSING,
    design_label,
    finite_or_none,
    is_number,
    plain,
    stat_label,
)
from auditor.report.xlsx.formulas import (
    LiveFormula,
    agreement_formula,
    design_templates,
    resolve,
    stat_templates,
    usable,
)
from auditor.report.xlsx.layout import SheetWriter
from auditor.report.xlsx.style import shown_number

LIVE_HEADERS = ("statistic", "regaudit", "recomputed here", "agreement", "formula")
DESIGN_HEADERS = ("design metric", "regaudit", "recomputed here", "agreement", "formula")


def has_used_points(regression: RegressionResult) -> bool:
    return any(point.used for point in regression.data)


def live_keys(regression: RegressionResult) -> list[str]:
    """The statistics that get a live formula (none without used points to compute over)."""
    if not has_used_points(regression):
        return []
    return usable(stat_templates(regression), regression.intended)


def live_height(regression: RegressionResult) -> int:
    """Rows of the "recomputed here" section: title, explanation, header, one per formula."""
    return 3 + max(1, len(live_keys(regression)))


def design_height(regression: RegressionResult) -> int:
    return 2 + max(1, len(regression.design))


def _row(out: SheetWriter, row: int, label: str, value: object, live: LiveFormula | None) -> None:
    styles = out.styles
    out.put(row, 0, label, styles.top)
    shown = finite_or_none(value)
    if not is_number(shown) and shown is not None and not isinstance(shown, str):
        shown = json.dumps(plain(shown), ensure_ascii=False)  # lists and tables of a metric
    out.num(row, 1, MISSING if shown is None else shown)
    if live is None:
        return
    out.sheet.write_formula(row, 2, live.formula, styles.numeric(live.value, "live"), live.value)
    out.fit(2, len(shown_number(live.value)))
    live_cell = xl_rowcol_to_cell(row, 2)
    fixed_cell = xl_rowcol_to_cell(row, 1)
    out.sheet.write_formula(row, 3, agreement_formula(live_cell, fixed_cell), styles.live, "agrees")
    out.fit(3, len("agreement"))
    out.put(row, 4, live.shown, styles.formula_text, fit=False)


def _formulas(
    templates: dict[str, str],
    values: dict[str, object],
    keys: list[str],
    top: int,
    ranges: dict[str, str],
) -> dict[str, LiveFormula]:
    cells = {
        key: xl_rowcol_to_cell(top + i, 2, row_abs=True, col_abs=True) for i, key in enumerate(keys)
    }
    return {
        key: LiveFormula(key, resolve(templates[key], ranges, cells), float(values[key]))  # type: ignore[arg-type]
        for key in keys
    }


def write_live(
    out: SheetWriter, regression: RegressionResult, top: int, ranges: dict[str, str]
) -> list[LiveFormula]:
    """The intended fit recomputed by the spreadsheet's own functions over the used points."""
    styles = out.styles
    templates = stat_templates(regression)
    keys = live_keys(regression)
    out.put(top, 0, "Recomputed here", styles.section, fit=False)
    out.put(
        top + 1,
        0,
        "Live formulas over the used points of the snapshot below, stored with regaudit's "
        "values; a spreadsheet that recalculates shows its own result and the agreement column "
        "compares the two (1e-9 relative).",
        styles.muted,
        fit=False,
    )
    for col, text in enumerate(LIVE_HEADERS):
        out.header(top + 2, col, text, numeric=col in (1, 2))
    first = top + 3
    formulas = _formulas(templates, regression.intended, keys, first, ranges)
    for offset, key in enumerate(keys):
        _row(out, first + offset, stat_label(key), regression.intended[key], formulas[key])
    if not keys:
        out.put(
            first,
            0,
            "no statistic could be recomputed (the fit is undefined)",
            styles.muted,
            fit=False,
        )
    return list(formulas.values())


def write_design(
    out: SheetWriter, regression: RegressionResult, top: int, ranges: dict[str, str]
) -> list[LiveFormula]:
    """Every design metric regaudit reports, with a live formula where one reproduces it."""
    styles = out.styles
    out.put(top, 0, "Design of x", styles.section, fit=False)
    for col, text in enumerate(DESIGN_HEADERS):
        out.header(top + 1, col, text, numeric=col in (1, 2))
    first = top + 2
    keys = list(regression.design)
    templates = design_templates(regression)
    with_formula = usable(templates, regression.design) if has_used_points(regression) else []
    cells = {
        key: xl_rowcol_to_cell(first + keys.index(key), 2, row_abs=True, col_abs=True)
        for key in with_formula
    }
    written: list[LiveFormula] = []
    for offset, key in enumerate(keys):
        live = None
        if key in with_formula:
            value = float(regression.design[key])
            live = LiveFormula(key, resolve(templates[key], ranges, cells), value)
            written.append(live)
        _row(out, first + offset, design_label(key), regression.design[key], live)
    if not keys:
        out.put(first, 0, "no design metrics were recorded", styles.muted, fit=False)
    return written
