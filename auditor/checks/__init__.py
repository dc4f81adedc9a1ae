"""Checks: each a small unit with a stable id, a one-line summary and a docstring that shows a
failing and a passing example. Importing this package registers every check in ``REGISTRY``."""

from auditor.checks import agreement, data, formulas, workbook_level  # noqa: F401
from auditor.checks.base import REGISTRY, Check, RegressionContext, run_regression_checks

__all__ = ["REGISTRY", "Check", "RegressionContext", "run_regression_checks"]
