"""Levels counted by one sort agree with counting them one by one; the lack-of-fit test built on
them matches a pandas groupby of the same data (the reference)."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from auditor.design.lackfit import lack_of_fit, level_counts, level_groups


@pytest.mark.parametrize("seed", range(5))
def test_level_counts_agree_with_level_groups(seed: int) -> None:
    rng = np.random.default_rng(seed)
    x = rng.choice([0.5, 1.0, 2.0, -0.0, 0.0, 7.25, 1e-9], size=40)
    distinct, counts = level_counts(x)  # type: ignore[misc]
    groups = level_groups(x)
    assert distinct.tolist() == sorted(groups)
    assert counts.tolist() == [len(groups[v]) for v in sorted(groups)]


def test_a_nan_or_an_infinity_leaves_the_counting_to_level_groups() -> None:
    assert level_counts([1.0, math.nan, math.nan]) is None
    assert level_counts([1.0, math.inf]) is None
    assert len(level_groups([1.0, math.nan, math.nan])) == 3  # each NaN apart


@pytest.mark.parametrize("seed", range(4))
def test_lack_of_fit_matches_a_groupby(seed: int) -> None:
    rng = np.random.default_rng(100 + seed)
    x = np.repeat(np.arange(1.0, 7.0), rng.integers(1, 4, 6))
    y = 0.3 + 0.8 * x + 0.05 * x**2 + rng.normal(0, 0.1, x.size)
    slope, intercept = np.polyfit(x, y, 1)
    ss_residual = float(((y - intercept - slope * x) ** 2).sum())
    got = lack_of_fit(x, y, ss_residual)
    frame = pd.DataFrame({"x": x, "y": y})
    pure = float(((frame.y - frame.groupby("x").y.transform("mean")) ** 2).sum())
    levels = frame.x.nunique()
    assert got is not None
    assert got.df_pure_error == x.size - levels
    assert got.df_lack_of_fit == levels - 2
    assert got.ss_pure_error == pytest.approx(pure, rel=1e-12)
    assert got.ss_lack_of_fit == pytest.approx(ss_residual - pure, rel=1e-9)


def test_no_replicates_no_test() -> None:
    x = np.arange(8.0)
    assert lack_of_fit(x, 2.0 * x + np.sin(x), 1.0) is None
