"""The independent fit against NIST StRD certified values (Norris, NoInt1, NoInt2).

Source of every certified figure: NIST Statistical Reference Datasets, Linear Least Squares
Regression (tests/reference/README.md). The score is the log relative error, the number of
correct significant digits. Run ``python tests/test_fit_nist.py`` for the table of LREs.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from auditor.fit.ols import FitResult, fit_ols

REFERENCE = Path(__file__).parents[1] / "reference"
CERTIFIED_DIGITS = 15.0  # NIST certifies 15 significant digits: no LRE above that means anything

# name -> (data file stem, with intercept, minimum LRE, statistic -> (json key | recalled value))
DATASETS: dict[str, tuple[str, bool, float, dict[str, str | float]]] = {
    "Norris": (
        "nist_strd_norris",
        True,
        13.0,
        {
            "slope": "slope",
            "intercept": "intercept",
            "se_slope": "se_slope",
            "se_intercept": "se_intercept",
            "residual_sd": "residual_sd",
            "r_squared": "r_squared",
            "ss_residual": "ss_residual",
            "ss_regression": "ss_regression",
            "f": "f_statistic",
        },
    ),
    "NoInt1": (
        "nist_strd_noint1",
        False,
        12.0,
        {
            "slope": "slope",
            "se_slope": "se_slope",
            "ss_residual": "ss_residual",
            # NIST certificate for NoInt1, residual SD and uncentred R² (from memory; the json
            # copy does not carry them). sqrt(127.272727272727 / 10) = 3.5675303400634 agrees.
            "residual_sd": 3.56753034006338,
            "r_squared": 0.999365492298663,
        },
    ),
    "NoInt2": (
        "nist_strd_noint2",
        False,
        12.0,
        {
            "slope": "slope",
            "se_slope": "se_slope",
            "ss_residual": "ss_residual",
            # NIST certificate for NoInt2 (from memory): sqrt(0.272727272727273 / 2) agrees.
            "residual_sd": 0.369274472937998,
            "r_squared": 0.993348115299335,
        },
    ),
}


def log_relative_error(computed: float, certified: float) -> float:
    """LRE as NIST scores it: -log10 of the relative error (absolute when certified is 0)."""
    error = abs(computed - certified) / (abs(certified) if certified != 0 else 1.0)
    return CERTIFIED_DIGITS if error == 0 else min(CERTIFIED_DIGITS, -math.log10(error))


def load(stem: str, intercept: bool) -> tuple[FitResult, dict[str, float]]:
    data = np.loadtxt(REFERENCE / f"{stem}.csv", delimiter=",", skiprows=1)
    certified = json.loads((REFERENCE / f"{stem}.json").read_text())["certified"]
    return fit_ols(data[:, 0], data[:, 1], intercept=intercept), certified


def lre_table() -> list[tuple[str, str, float, float, float, float]]:
    """(dataset, statistic, computed, certified, LRE, required LRE) for every certified figure."""
    rows = []
    for name, (stem, intercept, required, wanted) in DATASETS.items():
        fit, certified = load(stem, intercept)
        stats = fit.stats()
        for key, source in wanted.items():
            value = stats[key]
            assert isinstance(value, float), f"{name} {key} is {value!r}"
            truth = certified[source] if isinstance(source, str) else source
            rows.append((name, key, value, truth, log_relative_error(value, truth), required))
    return rows


@pytest.mark.parametrize(
    "row", lre_table(), ids=lambda row: f"{row[0]}-{row[1]}" if isinstance(row, tuple) else ""
)
def test_certified_digits(row: tuple[str, str, float, float, float, float]) -> None:
    # NIST StRD certified values (source named in DATASETS); the thresholds are the brief's.
    name, key, computed, certified, lre, required = row
    assert lre >= required, f"{name} {key}: {computed!r} vs certified {certified!r}, LRE {lre:.2f}"


@pytest.mark.parametrize("name", list(DATASETS))
def test_certified_degrees_of_freedom(name: str) -> None:
    stem, intercept, _, _ = DATASETS[name]
    fit, certified = load(stem, intercept)
    assert fit.status == "ok"
    assert fit.df == certified["df_residual"]  # NIST StRD certificate


def test_norris_mean_square_residual() -> None:
    fit, certified = load("nist_strd_norris", True)
    # NIST StRD Norris certifies the residual mean square 0.782864662630069.
    lre = log_relative_error(fit.residual_sd**2, certified["ms_residual"])
    assert lre >= 13.0


def test_lre_scores_digits() -> None:
    # Hand-derived from the definition: an error of 1e-13 relative is 13 correct digits.
    assert log_relative_error(1.0 + 1e-13, 1.0) == pytest.approx(13.0, abs=1e-3)
    assert log_relative_error(2.0, 2.0) == CERTIFIED_DIGITS


def main() -> None:
    print(
        f"{'dataset':<8} {'statistic':<14} {'computed':>24} {'certified':>24} {'LRE':>6} {'min':>4}"
    )
    for name, key, computed, certified, lre, required in lre_table():
        print(f"{name:<8} {key:<14} {computed!r:>24} {certified!r:>24} {lre:6.2f} {required:4.0f}")


if __name__ == "__main__":
    main()
