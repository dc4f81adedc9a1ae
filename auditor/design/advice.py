"""Concrete advice for the design checks: numbers a reviewer can act on.

"With the present scatter (s = 0.41), Sxx ≥ 412 is needed …; 8 points evenly spaced over 10–40
would give Sxx = 1,050." Every suggested design is computed (auditor.design.power), never guessed,
and
the trade-off is always said: the two-end design minimises the SE but cannot show curvature.
"""

from __future__ import annotations

import math

from auditor.design.metrics import DesignMetrics
from auditor.design.power import smallest_n, sxx_even, sxx_to_detect
from auditor.policy import Policy


def num(value: float | None, sig: int = 3) -> str:
    """A number as a reviewer reads it: 3 significant digits, thousands separated."""
    if value is None or not math.isfinite(value):
        return "—"
    if value == 0.0:
        return "0"
    if abs(value) >= 1000.0:
        return f"{round(value):,}"
    text = f"{value:.{sig}g}"
    return text if "e" not in text else f"{value:.{sig - 1}e}"


def span(low: float, high: float) -> str:
    return f"{num(low, 4)}–{num(high, 4)}"


def percent(share: float | None) -> str:
    return "—" if share is None else f"{100.0 * share:.0f} %"


def trade_off(policy: Policy) -> str:
    levels = int(policy.get("min_levels"))
    return (
        "The two-end design minimises the SE but cannot show curvature: keep at least "
        f"{max(levels, 3)} levels (5 for a calibration) and replicate some of them so that lack "
        "of fit can be tested."
    )


def _tidy_interval(centre: float, width: float, non_negative: bool) -> tuple[float, float]:
    """An interval of at least ``width`` about ``centre``, its ends rounded outwards."""
    step = 10.0 ** math.floor(math.log10(width)) / 2.0
    low = math.floor((centre - width / 2.0) / step) * step
    high = math.ceil((centre + width / 2.0) / step) * step
    if non_negative and low < 0.0:
        low, high = 0.0, math.ceil(width / step) * step
    return low, high


def wider_designs(metrics: DesignMetrics, policy: Policy) -> list[str]:
    """Designs that would detect the slope that matters: a wider range, or more points."""
    target, s, n = metrics.slope_that_matters, metrics.residual_sd, metrics.n
    if not target or s is None or metrics.x_min is None or metrics.x_max is None:
        return []
    parameters = n - (metrics.df or n - 2)
    alpha, power = policy.alpha, policy.get("power")

    def needed(df: int) -> float:
        return sxx_to_detect(target, s, df, alpha, power)

    out = []
    if metrics.working_range is not None:
        low, high = metrics.working_range
        count = smallest_n(lambda k: sxx_even(k, low, high), needed, 3, 10_000, parameters)
        if count is not None:
            out.append(
                f"{count} points evenly spaced over the stated working range {span(low, high)} "
                f"would give Sxx = {num(sxx_even(count, low, high))}"
            )
    if metrics.width_needed and metrics.width_needed > 0.0:
        centre = (metrics.x_min + metrics.x_max) / 2.0
        low, high = _tidy_interval(centre, metrics.width_needed, metrics.x_min >= 0.0)
        count = max(n, int(policy.get("min_levels")))
        if sxx_even(count, low, high) >= needed(count - parameters):
            out.append(
                f"{count} points evenly spaced over {span(low, high)} would give "
                f"Sxx = {num(sxx_even(count, low, high))}"
            )
    if metrics.n_even_needed is not None and metrics.x_max > metrics.x_min:
        out.append(
            f"over the present {span(metrics.x_min, metrics.x_max)}, {metrics.n_even_needed} "
            "evenly spaced points would be needed"
        )
    return out


def detect_sentence(metrics: DesignMetrics, policy: Policy) -> str:
    """'with the present scatter (s = 0.41), Sxx ≥ 412 is needed to detect … today Sxx = 96.'"""
    return (
        f"with the present scatter (s = {num(metrics.residual_sd)}), Sxx ≥ "
        f"{num(metrics.sxx_needed)} is needed to detect a slope of "
        f"{num(metrics.slope_that_matters)} with {percent(policy.get('power'))} power at "
        f"α = {policy.alpha:g}; today Sxx = {num(metrics.sxx)} (x spans "
        f"{span(metrics.x_min or 0.0, metrics.x_max or 0.0)}, {metrics.n} points), so the power "
        f"is {percent(metrics.power)} and the smallest slope this design detects is "
        f"{num(metrics.min_detectable_slope)}"
    )
