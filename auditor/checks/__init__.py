"""Checks: each a small unit with a stable id, a one-line summary and a docstring that shows a
failing and a passing example. Importing this package registers every check in ``REGISTRY``."""

from auditor.checks import (  # noqa: F401
    agreement,
    coefficients,
    data,
    design,
    formula_audit,
    formula_links,
    formula_pasted,
    formula_siblings,
    formulas,
    workbook_level,
)
from auditor.checks.base import (
    REGISTRY,
    Check,
    catalogue,
    run_regression_checks,
)
from auditor.context import RegressionContext

__all__ = ["REGISTRY", "Check", "RegressionContext", "catalogue", "run_regression_checks"]
