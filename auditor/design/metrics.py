"""Design metrics of one regression: is the x spread wide enough for what is claimed?

SE(b1) = s/√Sxx: for the same scatter, x values spread further apart give a steadier slope. Per
regression this module measures the spread (Sxx, range, levels, replicates, evenness), how much
any one point carries (leverage, share of Sxx, the slope and p-value without it), what the design
can detect (power at the slope that matters, the minimum detectable slope — noncentral t, see
auditor.design.power), what it would need (Sxx, n over the present range, or range with the
present n), the CI of the slope, the lack-of-fit test when levels are replicated
(auditor.design.lackfit), and the predictions the workbook makes beyond the x range
(auditor.design.inputs).

Simple regression (one x column) only; with several x columns only n, levels and the largest
leverage are given. ``design_metrics`` returns the JSON-ready dict ``RegressionResult.design``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

import numpy as np

from auditor.design.dropone import DropOne, drop_one, slopes_and_p_without
from auditor.design.inputs import DesignInputs, Prediction
from auditor.design.lackfit import (
    LackOfFit,
    count_levels,
    designed_replicates,
    lack_of_fit,
    level_groups,
)
from auditor.design.power import (
    min_detectable_slope,
    slope_power,
    smallest_n,
    sxx_even,
    sxx_to_detect,
    width_for_sxx_even,
)
from auditor.design.rows import Rows
from auditor.extract.record import Extracted
from auditor.fit.distributions import t_ppf
from auditor.fit.ols import FitResult
from auditor.model import clean_number
from auditor.policy import Policy

MAX_ADVICE_N = 10_000
# Fields of DesignMetrics that to_dict flattens or leaves out (records, lists, the flag).
_NESTED = frozenset({"drop", "lack", "outside", "working_range", "simple"})


@dataclass
class DesignMetrics:
    n: int
    levels: int
    simple: bool  # one x column and a fit with a slope and a residual SD
    replicated_levels: int = 0
    max_replicates: int = 0
    sxx: float | None = None
    x_min: float | None = None
    x_max: float | None = None
    x_mean: float | None = None
    spacing_evenness: float | None = None  # smallest gap / largest gap between levels (1: even)
    max_leverage: float | None = None
    max_leverage_row: int | None = None
    leverage_bound: float | None = None  # max(policy max_leverage, leverage_multiple·p/n)
    max_sxx_share: float | None = None
    max_sxx_share_row: int | None = None
    top_share_slope_without: float | None = None  # the slope with the max-share point left out
    top_share_p_without: float | None = None
    residual_sd: float | None = None
    df: int | None = None
    slope: float | None = None
    p_slope: float | None = None
    ci_low: float | None = None
    ci_high: float | None = None
    ci_half_width: float | None = None
    slope_that_matters: float | None = None
    slope_that_matters_source: str = ""
    power: float | None = None  # to detect the slope that matters at the policy's alpha
    min_detectable_slope: float | None = None
    sxx_needed: float | None = None
    se_needed: float | None = None
    n_even_needed: int | None = None  # evenly spaced over the present x range
    width_needed: float | None = None  # range the present n must span, evenly spaced
    drop: DropOne | None = None
    lack: LackOfFit | None = None
    predictions: int = 0
    outside: list[Prediction] | None = None
    working_range: tuple[float, float] | None = None
    working_range_cell: str | None = None

    @property
    def x_range(self) -> float | None:
        if self.x_min is None or self.x_max is None:
            return None
        return self.x_max - self.x_min

    def to_dict(self) -> dict[str, float | int | str | None]:
        """JSON-ready (no NaN, no nested objects): the ``design`` part of audit.json."""
        # The fields one by one, not dataclasses.asdict: that deep-copies the nested records
        # (the predictions, the drop-one summary) only for them to be left out or flattened.
        out = {name: clean_number(getattr(self, name)) for name in _FLAT_FIELDS}
        out["x_range"] = clean_number(self.x_range)
        if self.drop is not None:
            for name in _DROP_FIELDS:
                out[f"drop_one_{name}"] = clean_number(getattr(self.drop, name))
        if self.lack is not None:
            out["lack_of_fit_f"] = clean_number(self.lack.f)
            out["lack_of_fit_p"] = clean_number(self.lack.p)
            out["lack_of_fit_df"] = self.lack.df_lack_of_fit
            out["pure_error_df"] = self.lack.df_pure_error
        outside = self.outside or []
        out["predictions_outside"] = len(outside)
        if outside:
            far = max(outside, key=lambda p: self._beyond(p.x))
            out["farthest_prediction_x"] = far.x
            out["farthest_prediction_cell"] = far.cell
        if self.working_range is not None:
            out["working_range_low"], out["working_range_high"] = self.working_range
        return out

    def _beyond(self, x: float) -> float:
        low, high = self.x_min or 0.0, self.x_max or 0.0
        return max(low - x, x - high, 0.0)


# The field names to_dict writes, in their order (dataclasses.fields builds them anew each call).
_FLAT_FIELDS = tuple(item.name for item in fields(DesignMetrics) if item.name not in _NESTED)
_DROP_FIELDS = tuple(item.name for item in fields(DropOne))


def _finite(value: float) -> float | None:
    return float(value) if math.isfinite(value) else None


def relative_slope_that_matters(x: np.ndarray, y: np.ndarray, elasticity: float) -> float | None:
    """The default slope that matters: elasticity·|ȳ|/|x̄| (a 10 % change in x moving y by
    elasticity·10 % of its mean). Only when x has one sign (a ratio scale is plausible)."""
    if elasticity <= 0.0 or x.size == 0:
        return None
    x_mean, y_mean = float(x.sum()) / x.size, float(y.sum()) / y.size  # np.mean's own sum
    if x_mean == 0.0 or y_mean == 0.0 or (x.min() < 0.0 < x.max()):
        return None
    return elasticity * abs(y_mean) / abs(x_mean)


def compute_design(
    data: Extracted,
    fit: FitResult,
    policy: Policy,
    inputs: DesignInputs | None = None,
    used_rows: Rows | None = None,
    known_levels: tuple[int, tuple[np.ndarray, np.ndarray] | None] | None = None,
) -> DesignMetrics:
    """Every design metric of one regression (module doc); the used points' rows and
    ``count_levels(data.x)`` when the caller has them."""
    n = data.n
    # One sort for the levels, spacing and replicates (made by the caller, who shares it).
    levels, counted = count_levels(data.x) if known_levels is None else known_levels
    rows = [p.row for p in data.points if p.used] if used_rows is None else used_rows
    metrics = DesignMetrics(n=n, levels=levels, simple=False)
    if len(fit.leverage) == n and n:
        top = int(np.argmax(fit.leverage))
        metrics.max_leverage = float(fit.leverage[top])
        metrics.max_leverage_row = rows[top] if len(rows) == n else None
    if data.x.shape[1] != 1 or n == 0:
        return metrics
    x, y = data.x[:, 0], data.y
    if counted is None:
        groups = level_groups(x)
        distinct = np.array(sorted(groups))
        counts = np.array([len(g) for g in groups.values()])
    else:
        distinct, counts = counted
    metrics.replicated_levels = int(np.count_nonzero(counts > 1))
    metrics.max_replicates = int(counts.max())
    metrics.x_min, metrics.x_max = float(x.min()), float(x.max())
    metrics.x_mean = float(fit.x_mean) if math.isfinite(fit.x_mean) else float(np.mean(x))
    metrics.sxx = float(fit.sxx) if math.isfinite(fit.sxx) else None
    if distinct.size >= 3:
        gaps = np.diff(distinct)
        metrics.spacing_evenness = float(gaps.min() / gaps.max())
    if fit.status != "ok" or not fit.sxx > 0.0 or not fit.residual_sd > 0.0 or fit.df < 1:
        return metrics
    _fill_simple(metrics, fit, policy, x, y, rows, counted)
    _fill_inputs(metrics, inputs, policy)
    return metrics


def _fill_simple(
    metrics: DesignMetrics,
    fit: FitResult,
    policy: Policy,
    x: np.ndarray,
    y: np.ndarray,
    rows: Rows,
    counted: tuple[np.ndarray, np.ndarray] | None,
) -> None:
    metrics.simple = True
    parameters = 2 if fit.intercept else 1
    centred = x - fit.x_mean if fit.intercept else x
    shares = centred * centred / fit.sxx
    top = int(np.argmax(shares))
    metrics.max_sxx_share, metrics.max_sxx_share_row = float(shares[top]), rows[top]
    del centred, shares  # arrays of n: not held through the leave-one-out below
    bound = policy.find("max_leverage")
    multiple = policy.find("leverage_multiple")
    candidates = [b for b in (bound, multiple * parameters / metrics.n if multiple else None) if b]
    metrics.leverage_bound = max(candidates) if candidates else None
    s, sxx, df = fit.residual_sd, fit.sxx, fit.df
    metrics.residual_sd, metrics.df = s, df
    metrics.slope, metrics.p_slope = float(fit.slopes[0]), float(fit.p_slopes[0])
    metrics.ci_low, metrics.ci_high = float(fit.ci_low[0]), float(fit.ci_high[0])
    metrics.ci_half_width = (metrics.ci_high - metrics.ci_low) / 2.0
    alpha, power = policy.alpha, policy.get("power")
    metrics.min_detectable_slope = min_detectable_slope(s, sxx, df, alpha, power)
    left_out = slopes_and_p_without(x, fit)  # once, for the drop-one summary and the top share
    metrics.drop = drop_one(x, y, fit, rows, alpha, left_out)
    slopes_without, p_without = left_out
    metrics.top_share_slope_without = _finite(slopes_without[top])
    metrics.top_share_p_without = _finite(p_without[top])
    if designed_replicates(x, counted):  # coincidental ties are no pure error
        metrics.lack = lack_of_fit(x, y, fit.ss_residual, fit.intercept)
    stated = policy.find("slope_that_matters")
    if stated:
        metrics.slope_that_matters, metrics.slope_that_matters_source = stated, "the policy"
    else:
        default = relative_slope_that_matters(x, y, policy.find("relevant_elasticity") or 0.0)
        if default is not None:
            metrics.slope_that_matters = default
            elasticity = policy.find("relevant_elasticity")
            metrics.slope_that_matters_source = (
                f"the policy's default of {elasticity:g} × mean of y / mean of x"
            )


def _read_back_margin(metrics: DesignMetrics, policy: Policy, width: float) -> float:
    """Half-width of the interval of a concentration read back from one response (common
    practice for inverse prediction): t · s/|b1| · √(1 + 1/n + width²/Sxx), at the widest."""
    s, slope, sxx, df, n = (
        metrics.residual_sd,
        metrics.slope,
        metrics.sxx,
        metrics.df,
        metrics.n,
    )
    if not (s and slope and sxx and df and n) or df < 1:
        return 0.0
    t = float(t_ppf(1.0 - policy.alpha / 2.0, df))
    return t * abs(s / slope) * math.sqrt(1.0 + 1.0 / n + width * width / sxx)


def _fill_inputs(metrics: DesignMetrics, inputs: DesignInputs | None, policy: Policy) -> None:
    """Stated values from the workbook, then what the slope that matters asks of the design."""
    if inputs is not None:
        if inputs.slope_that_matters:
            metrics.slope_that_matters = inputs.slope_that_matters
            metrics.slope_that_matters_source = f"cell {inputs.slope_that_matters_cell}"
        metrics.predictions = len(inputs.predictions)
        low, high = metrics.x_min or 0.0, metrics.x_max or 0.0
        margin = (policy.find("extrapolation_tolerance") or 0.0) * (high - low)
        slack = margin + 1e-12 * max(abs(low), abs(high), high - low)
        # A concentration read back from a response, (y - b0)/b1, carries the scatter of y: the
        # top standard read back as 10.03 on a 0-10 curve is at the range's end, not beyond it.
        read_back = _read_back_margin(metrics, policy, high - low)
        metrics.outside = [
            p
            for p in inputs.predictions
            if (p.x < low - slack - (read_back if p.how.startswith("(y") else 0.0))
            or (p.x > high + slack + (read_back if p.how.startswith("(y") else 0.0))
        ]
        metrics.working_range = inputs.working_range
        metrics.working_range_cell = inputs.working_range_cell
    target = metrics.slope_that_matters
    if not target or metrics.sxx is None or metrics.residual_sd is None or metrics.df is None:
        return
    s, alpha, power = metrics.residual_sd, policy.alpha, policy.get("power")
    metrics.power = slope_power(target, s, metrics.sxx, metrics.df, alpha)
    metrics.sxx_needed = sxx_to_detect(target, s, metrics.df, alpha, power)
    metrics.se_needed = s / math.sqrt(metrics.sxx_needed)
    parameters = metrics.n - metrics.df
    low, high = metrics.x_min or 0.0, metrics.x_max or 0.0
    if high > low:
        metrics.n_even_needed = smallest_n(
            lambda k: sxx_even(k, low, high),
            lambda df: sxx_to_detect(target, s, df, alpha, power),
            n_min=3,
            n_max=MAX_ADVICE_N,
            parameters=parameters,
        )
    if metrics.n >= 2:
        metrics.width_needed = width_for_sxx_even(metrics.sxx_needed, metrics.n)


def design_metrics(
    data: Extracted, fit: FitResult, policy: Policy, inputs: DesignInputs | None = None
) -> dict[str, float | int | str | None]:
    """The design part of a regression's result (JSON-ready, no NaN)."""
    return compute_design(data, fit, policy, inputs).to_dict()
