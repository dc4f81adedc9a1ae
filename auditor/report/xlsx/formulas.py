"""Live formulas of a detail sheet: the regression recomputed by the spreadsheet itself.

Each statistic regaudit computed becomes a spreadsheet formula over the snapshot's columns of used
points (SLOPE, INTERCEPT, STEYX, RSQ for one x with an intercept; LINEST otherwise, whose first
row holds the coefficients in reverse order of the x columns). The formula is written together with
regaudit's value as its stored value, so any viewer shows the right number, while a spreadsheet
that recalculates shows its own: the reviewer can then see both agree.

Templates name snapshot ranges as ``{y}``, ``{x}`` (the first x column), ``{X}`` (all x columns)
and other statistics by their key, ``{slope}``; ``resolve`` fills in cell addresses.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from auditor.model import RegressionResult
from auditor.report.common import finite_or_none, is_number, stat_order

PLACEHOLDER = re.compile(r"\{([^{}]+)\}")
RANGE_NAMES = ("x", "X", "y")
AGREEMENT = "1E-9"  # the relative tolerance of the sheet's own agreement check

# One x column with an intercept: the functions a reviewer knows by name.
SIMPLE: dict[str, str] = {
    "slope": "SLOPE({y},{x})",
    "intercept": "INTERCEPT({y},{x})",
    "se_slope": "STEYX({y},{x})/SQRT(DEVSQ({x}))",
    "se_intercept": "STEYX({y},{x})*SQRT(1/COUNT({y})+AVERAGE({x})^2/DEVSQ({x}))",
    "t_slope": "{slope}/{se_slope}",
    "t_intercept": "{intercept}/{se_intercept}",
    "p_slope": "_xlfn.T.DIST.2T(ABS({t_slope}),{df})",
    "p_intercept": "_xlfn.T.DIST.2T(ABS({t_intercept}),{df})",
    "df": "COUNT({y})-2",
    "n": "COUNT({y})",
    "residual_sd": "STEYX({y},{x})",
    "r_squared": "RSQ({y},{x})",
    "r": "CORREL({x},{y})",
    "f": "INDEX(LINEST({y},{x},TRUE,TRUE),4,1)",
    "ss_regression": "INDEX(LINEST({y},{x},TRUE,TRUE),5,1)",
    "ss_residual": "INDEX(LINEST({y},{x},TRUE,TRUE),5,2)",
}

# Design metrics that a formula over the used points reproduces, whatever the model.
DESIGN_ANY: dict[str, str] = {
    "n": "COUNT({y})",
    "levels": "SUMPRODUCT(1/COUNTIF({x},{x}))",
    "replicated_levels": "SUMPRODUCT((COUNTIF({x},{x})>1)/COUNTIF({x},{x}))",
    "max_replicates": "SUMPRODUCT(MAX(COUNTIF({x},{x})))",
    "x_min": "MIN({x})",
    "x_max": "MAX({x})",
    "x_mean": "AVERAGE({x})",
    "x_range": "MAX({x})-MIN({x})",
}
# ... and those of a straight line with an intercept. SUMPRODUCT makes both Excel and LibreOffice
# evaluate the inner expression over the whole range without an array formula.
DESIGN_LINE: dict[str, str] = {
    "sxx": "DEVSQ({x})",
    "max_leverage": "SUMPRODUCT(MAX(1/COUNT({x})+({x}-AVERAGE({x}))^2/DEVSQ({x})))",
    "max_sxx_share": "SUMPRODUCT(MAX(({x}-AVERAGE({x}))^2))/DEVSQ({x})",
    "residual_sd": "STEYX({y},{x})",
    "df": "COUNT({y})-2",
    "slope": "SLOPE({y},{x})",
    "p_slope": "_xlfn.T.DIST.2T(ABS(SLOPE({y},{x})/STEYX({y},{x})*SQRT(DEVSQ({x}))),COUNT({y})-2)",
}


@dataclass(frozen=True)
class LiveFormula:
    key: str
    formula: str  # with "=", ready for write_formula
    value: float  # regaudit's value, stored with the formula

    @property
    def shown(self) -> str:
        """The formula as a reader types it (the file format's "_xlfn." prefix removed)."""
        return self.formula.replace("_xlfn.", "")


def _linest_templates(columns: int, intercept: bool) -> dict[str, str]:
    const = "TRUE" if intercept else "FALSE"
    fit = f"LINEST({{y}},{{X}},{const},TRUE)"
    templates = {
        "n": "COUNT({y})",
        "r_squared": f"INDEX({fit},3,1)",
        "residual_sd": f"INDEX({fit},3,2)",
        "f": f"INDEX({fit},4,1)",
        "df": f"INDEX({fit},4,2)",
        "ss_regression": f"INDEX({fit},5,1)",
        "ss_residual": f"INDEX({fit},5,2)",
    }
    for column in range(1, columns + 1):
        suffix = "" if columns == 1 else f"[{column}]"
        position = columns - column + 1  # LINEST lists the last x column first
        templates[f"slope{suffix}"] = f"INDEX({fit},1,{position})"
        templates[f"se_slope{suffix}"] = f"INDEX({fit},2,{position})"
        templates[f"t_slope{suffix}"] = f"{{slope{suffix}}}/{{se_slope{suffix}}}"
        templates[f"p_slope{suffix}"] = f"_xlfn.T.DIST.2T(ABS({{t_slope{suffix}}}),{{df}})"
    if intercept:
        templates["intercept"] = f"INDEX({fit},1,{columns + 1})"
        templates["se_intercept"] = f"INDEX({fit},2,{columns + 1})"
        templates["t_intercept"] = "{intercept}/{se_intercept}"
        templates["p_intercept"] = "_xlfn.T.DIST.2T(ABS({t_intercept}),{df})"
    if columns > 1:
        templates["r"] = "SQRT({r_squared})"  # the multiple correlation, never negative
    return templates


def stat_templates(regression: RegressionResult) -> dict[str, str]:
    if regression.x_columns == 1 and regression.intercept:
        return dict(SIMPLE)
    return _linest_templates(regression.x_columns, regression.intercept)


def design_templates(regression: RegressionResult) -> dict[str, str]:
    if regression.x_columns > 1:
        # With several x columns the design's range is that of the first; levels count rows.
        return {key: DESIGN_ANY[key] for key in ("n", "x_min", "x_max")}
    templates = dict(DESIGN_ANY)
    if regression.intercept:
        templates |= DESIGN_LINE
    else:
        # Through the origin SE(slope) = s / sqrt(sum of x squared): Sxx is not centred.
        templates["sxx"] = "SUMSQ({x})"
    return templates


def _value(values: dict[str, object], key: str) -> float | None:
    value = finite_or_none(values.get(key))
    return float(value) if is_number(value) else None


def _references(template: str) -> list[str]:
    return [name for name in PLACEHOLDER.findall(template) if name not in RANGE_NAMES]


def usable(templates: dict[str, str], values: dict[str, object]) -> list[str]:
    """Keys whose value is a finite number and whose formula refers only to usable keys."""
    keep = {key for key in templates if _value(values, key) is not None}
    changed = True
    while changed:  # dropping a key can strand the formulas that use it
        changed = False
        for key in sorted(keep):
            if any(ref not in keep for ref in _references(templates[key])):
                keep.discard(key)
                changed = True
    return sorted(keep, key=stat_order)


def resolve(template: str, ranges: dict[str, str], cells: dict[str, str]) -> str:
    """Fill a template's placeholders with snapshot ranges and the cells of other statistics."""

    def address(match: re.Match[str]) -> str:
        name = match.group(1)
        return ranges[name] if name in RANGE_NAMES else cells[name]

    return "=" + PLACEHOLDER.sub(address, template)


def agreement_formula(live: str, fixed: str) -> str:
    """A live check beside each formula: does the spreadsheet's value match regaudit's?"""
    scale = f"MAX(ABS({live}),ABS({fixed}))"
    return f'=IF(ABS({live}-{fixed})<={AGREEMENT}*{scale},"agrees","differs")'
