"""Design metrics (auditor.design.metrics) and the checks on hand-built regressions.

Sources: Anscombe (1973), "Graphs in Statistical Analysis", set 4 (tests/reference/): ten x
values at 8 and one at 19, so Sxx = 110 and the x = 19 point has leverage 1/11 + 100/110 = 1 and
carries all of Sxx (hand-derived); statsmodels for the slope's confidence interval; common
practice for the rest, as marked.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest
import statsmodels.api as sm
from test_design_support import FIRST_ROW, context

from auditor.checks import REGISTRY
from auditor.design.metrics import compute_design, design_metrics, relative_slope_that_matters
from auditor.policy import load_policy

REFERENCE = Path(__file__).parents[1] / "reference"


def anscombe(which: int) -> tuple[np.ndarray, np.ndarray]:
    with open(REFERENCE / "anscombe_quartet.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    return (
        np.array([float(r[f"x{which}"]) for r in rows]),
        np.array([float(r[f"y{which}"]) for r in rows]),
    )


def run(check_id: str, ctx: object) -> list:
    return REGISTRY[check_id].function(ctx)


def test_anscombe_four_leverage_one_carries_all_of_sxx() -> None:
    x, y = anscombe(4)
    ctx = context(x, y, reported_p=0.00217)  # Anscombe (1973): t = 4.24 on 9 df
    metrics = compute_design(ctx.data, ctx.fit, ctx.policy)
    far = FIRST_ROW + int(np.argmax(x))
    assert metrics.sxx == pytest.approx(110.0, rel=1e-12)
    assert metrics.max_leverage == pytest.approx(1.0, abs=1e-12)
    assert metrics.max_sxx_share == pytest.approx(100.0 / 110.0, rel=1e-12)
    assert metrics.max_leverage_row == far and metrics.max_sxx_share_row == far
    assert metrics.levels == 2
    found = run("one-point-carries-slope", ctx)
    assert [f.kind for f in found] == ["single-point-leverage"]
    assert found[0].severity == "major"  # without the point no slope can be fitted
    assert "no slope can be fitted" in found[0].message
    assert f"Data!A{far}:B{far}" in found[0].cells


def test_anscombe_one_is_not_carried_by_one_point() -> None:
    # Set 1 spreads x evenly over 4-14: the largest leverage is 1/11 + 25/110 = 0.318.
    x, y = anscombe(1)
    ctx = context(x, y, reported_p=0.00217)
    metrics = compute_design(ctx.data, ctx.fit, ctx.policy)
    assert metrics.max_leverage == pytest.approx(1 / 11 + 25 / 110, rel=1e-12)
    assert run("one-point-carries-slope", ctx) == []


def test_confidence_interval_matches_statsmodels() -> None:
    x, y = anscombe(1)
    ctx = context(x, y)
    metrics = compute_design(ctx.data, ctx.fit, ctx.policy)
    low, high = sm.OLS(y, sm.add_constant(x)).fit().conf_int(0.05)[1]
    assert (metrics.ci_low, metrics.ci_high) == (pytest.approx(low), pytest.approx(high))
    assert metrics.ci_half_width == pytest.approx((high - low) / 2.0)


def test_design_dict_is_json_ready_with_the_contract_keys() -> None:
    x, y = anscombe(4)
    ctx = context(x, y)
    design = design_metrics(ctx.data, ctx.fit, ctx.policy)
    json.dumps(design, allow_nan=False)  # raises on NaN or infinity
    for key in ("sxx", "x_min", "x_max", "levels", "max_leverage"):
        assert key in design
    assert (design["x_min"], design["x_max"], design["levels"]) == (8.0, 19.0, 2)


def test_degenerate_data_give_metrics_without_nan() -> None:
    ctx = context(np.array([4.0, 4.0, 4.0, 4.0]), np.array([1.0, 2.0, 3.0, 2.5]))
    design = design_metrics(ctx.data, ctx.fit, ctx.policy)
    json.dumps(design, allow_nan=False)
    assert design["levels"] == 1 and design["sxx"] == 0.0
    assert all(run(check_id, ctx) == [] for check_id in REGISTRY if check_id.startswith("x-"))


def test_relative_default_needs_x_of_one_sign() -> None:
    # Common practice: elasticity needs a ratio scale; x spanning 0 has none.
    assert relative_slope_that_matters(np.array([40.0, 50.0]), np.array([10.0, 12.0]), 0.5) == (
        pytest.approx(0.5 * 11.0 / 45.0)
    )
    assert relative_slope_that_matters(np.array([-5.0, 5.0]), np.array([10.0, 12.0]), 0.5) is None


# Invented trial data: a narrow window of x (RH 44.0-45.4 %) and a wide one (RH 30-65 %), both
# with the same scatter and no slope to speak of.
NARROW_X = np.array([44.0, 44.2, 44.4, 44.6, 44.8, 45.0, 45.2, 45.4])
WIDE_X = np.linspace(30.0, 65.0, 8)
NOISE = np.array([0.3, -0.5, 0.1, 0.6, -0.2, -0.4, 0.5, -0.3])


def test_narrow_spread_fires_for_a_no_effect_claim_only_when_underpowered() -> None:
    narrow = context(NARROW_X, 12.0 + NOISE, reported_p="n.s.")
    found = run("x-spread-too-narrow", narrow)
    assert [f.kind for f in found] == ["narrow-spread"]
    assert found[0].severity == "minor"  # the claim is only the reported p, not words
    assert "Sxx ≥" in found[0].message and "evenly spaced" in found[0].fix
    assert "two-end design minimises the SE but cannot show curvature" in found[0].fix
    wide = context(WIDE_X, 12.0 + NOISE, reported_p="n.s.")
    assert run("x-spread-too-narrow", wide) == []


def test_narrow_spread_is_silent_for_a_significant_slope() -> None:
    steep = context(NARROW_X, 12.0 + 3.0 * (NARROW_X - 44.0) + 0.1 * NOISE, reported_p=0.0001)
    assert run("x-spread-too-narrow", steep) == []


def test_policy_slope_that_matters_replaces_the_default(tmp_path: Path) -> None:
    # A policy that states the slope that matters: 5 (per % RH) is easy to detect even narrow.
    base = (Path(__file__).parents[2] / "rules" / "general.toml").read_text(encoding="utf-8")
    policy_file = tmp_path / "steep.toml"
    policy_file.write_text(
        base + '\n[slope_that_matters]\nvalue = 5.0\nsource = "test"\n', encoding="utf-8"
    )
    ctx = context(NARROW_X, 12.0 + NOISE, reported_p="n.s.", policy=load_policy(str(policy_file)))
    metrics = compute_design(ctx.data, ctx.fit, ctx.policy)
    assert metrics.slope_that_matters == 5.0 and metrics.slope_that_matters_source == "the policy"
    assert run("x-spread-too-narrow", ctx) == []


def test_two_levels_are_few_and_three_are_enough() -> None:
    two = context(np.repeat([8.0, 12.0], 5), np.array([3, 3.2, 2.9, 3.1, 3, 5, 5.1, 4.9, 5.2, 5.0]))
    found = run("x-levels-too-few", two)
    assert [f.kind for f in found] == ["few-levels"] and found[0].severity == "minor"
    three = context(
        np.repeat([8.0, 10.0, 12.0], 3), np.array([3, 3.2, 2.9, 4, 4.1, 3.9, 5, 5.1, 4.9])
    )
    assert run("x-levels-too-few", three) == []
    calibration = load_policy("calibration")  # ICH Q2(R1): at least 5 (from memory)
    found = run("x-levels-too-few", context(three.data.x[:, 0], three.data.y, policy=calibration))
    assert found and found[0].severity == "major"


def test_precision_bound_flags_a_wide_interval(tmp_path: Path) -> None:
    # A policy asking for the slope to ±5 % (95 % CI); the half-width is t(0.975, 6)·SE with
    # t = 2.447 (handbook t table).
    base = (Path(__file__).parents[2] / "rules" / "general.toml").read_text(encoding="utf-8")
    policy_file = tmp_path / "precise.toml"
    policy_file.write_text(
        base + '\n[max_ci_relative_half_width]\nvalue = 0.05\nsource = "test"\n', encoding="utf-8"
    )
    policy = load_policy(str(policy_file))
    x = np.array([1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0])
    loose = context(x, 2.0 * x + 3.0 * NOISE, policy=policy)
    found = run("x-spread-too-narrow", loose)
    assert [f.kind for f in found] == ["narrow-spread"] and found[0].severity == "major"
    half = 2.447 * float(loose.fit.se_slopes[0])
    assert found[0].evidence["ci_half_width"] == pytest.approx(half, rel=1e-3)
    tight = context(x, 2.0 * x + 0.01 * NOISE, policy=policy)
    assert run("x-spread-too-narrow", tight) == []
