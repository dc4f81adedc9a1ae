"""Checks: each a small unit with a stable id, a one-line summary and a docstring that shows a
failing and a passing example. ``REGISTRY`` is built here, explicitly, from the family modules
named in ``FAMILY_NAMES`` (a new family module is added to that tuple)."""

from importlib import import_module

from auditor.checks.base import Check, build_registry, catalogue_of, run_checks
from auditor.context import RegressionContext, WorkbookContext
from auditor.model import CheckInfo, Finding

# The family modules, in the order their checks run (and reports list them).
FAMILY_NAMES = (
    "agreement",
    "axis_words",
    "broken_regressions",
    "calibration",
    "calibration_shape",
    "calibration_results",
    "coefficients",
    "data",
    "design",
    "formula_audit",
    "formula_links",
    "formula_pasted",
    "formula_siblings",
    "formulas",
    "pasted_tables",
    "predictions",
    "trendlines",
    "trendline_rest",
    "typed_tables",
    "workbook_level",
)
FAMILIES = tuple(import_module(f"auditor.checks.{name}") for name in FAMILY_NAMES)
REGISTRY: dict[str, Check] = build_registry(FAMILIES)


def catalogue() -> list[CheckInfo]:
    """Every check as the result model describes it (for reporters)."""
    return catalogue_of(REGISTRY)


def run_regression_checks(context: RegressionContext) -> list[Finding]:
    return run_checks(REGISTRY, "regression", context)


def run_workbook_checks(context: WorkbookContext) -> list[Finding]:
    return run_checks(REGISTRY, "workbook", context)


__all__ = [
    "FAMILIES",
    "REGISTRY",
    "Check",
    "RegressionContext",
    "WorkbookContext",
    "catalogue",
    "run_regression_checks",
    "run_workbook_checks",
]
