"""Names of the statistics in messages, and whether a wrong value changes a reader's conclusion."""

from __future__ import annotations

from auditor.compare.precision import parse_text_number
from auditor.context import RegressionContext
from auditor.fit.distributions import t_ppf
from auditor.model import ReportedValue, stat_base

NAMES = {
    "slope": "slope",
    "intercept": "intercept",
    "se_slope": "standard error of the slope",
    "se_intercept": "standard error of the intercept",
    "t_slope": "t statistic of the slope",
    "t_intercept": "t statistic of the intercept",
    "p_slope": "p-value of the slope",
    "p_intercept": "p-value of the intercept",
    "df": "residual degrees of freedom",
    "n": "number of points",
    "residual_sd": "residual standard deviation",
    "r_squared": "R²",
    "r": "correlation r",
    "f": "F statistic",
    "ss_regression": "regression sum of squares",
    "ss_residual": "residual sum of squares",
    "ci_slope_low": "lower confidence limit of the slope",
    "ci_slope_high": "upper confidence limit of the slope",
    "multiple_r": "multiple R",
    "adj_r_squared": "adjusted R²",
    "df_regression": "regression degrees of freedom",
    "df_total": "total degrees of freedom",
    "ss_total": "total sum of squares",
    "ms_regression": "regression mean square",
    "ms_residual": "residual mean square",
    "f_p": "p-value of F",
    "ci_intercept_low": "lower confidence limit of the intercept",
    "ci_intercept_high": "upper confidence limit of the intercept",
}


def describe(key: str) -> str:
    base, _, rest = stat_base(key).partition("[")
    name = NAMES.get(base, base)
    return f"{name} (x column {rest.rstrip(']')})" if rest else name


def _number(value: float | str | None) -> float | None:
    if isinstance(value, str):
        return parse_text_number(value.replace("<", "").replace(">", "").strip())
    return value


def significance_changes(context: RegressionContext, value: ReportedValue) -> bool:
    """Would a reader of the reported value reach another conclusion at the policy's alpha?"""
    alpha = context.policy.alpha
    fit = context.fit
    base = stat_base(value.key).split("[")[0]
    if base == "p_slope" and value.intended is not None:
        if isinstance(value.value, str):
            return False  # a text claim that fails is judged by the claim check below
        reported = _number(value.value)
        return reported is not None and (reported < alpha) != (value.intended < alpha)
    if base == "t_slope" and value.intended is not None and fit.df > 0:
        reported = _number(value.value)
        critical = float(t_ppf(1 - alpha / 2, fit.df))
        return reported is not None and (abs(reported) > critical) != (
            abs(value.intended) > critical
        )
    if base == "slope" and value.intended is not None:
        reported = _number(value.value)
        return reported is not None and reported * value.intended < 0
    return False
