"""The NIST StRD linear datasets, their certified values, and exact arithmetic on their doubles.

Source of every data file and certified value: NIST Statistical Reference Datasets, Linear Least
Squares Regression (https://www.itl.nist.gov/div898/strd/); each
``tests/reference/nist_strd_*.json``
names the public repository and path the copy was read from. Shared by the certified-value tests
and ``benchmarks/strd_accuracy.py``.

The *exact-arithmetic ceiling* of a dataset is the LRE that the exact least-squares solution of
the stored doubles reaches against the certified values: a spreadsheet holds x², …, x¹⁰ and the
decimal data as doubles, and no engine can be held to more digits than those doubles carry.
It is computed here with ``fractions`` (rational Gaussian elimination on the normal equations,
which is exact, so their conditioning does not matter).
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from decimal import Decimal, localcontext
from fractions import Fraction
from pathlib import Path

import numpy as np

REFERENCE = Path(__file__).parent / "reference"
CERTIFIED_DIGITS = 15.0  # NIST certifies 15 significant digits

# Name → file stem, in NIST's order (lower, average, higher difficulty).
DATASETS = {
    "Norris": "nist_strd_norris",
    "Pontius": "nist_strd_pontius",
    "NoInt1": "nist_strd_noint1",
    "NoInt2": "nist_strd_noint2",
    "Filip": "nist_strd_filip",
    "Longley": "nist_strd_longley",
    "Wampler1": "nist_strd_wampler1",
    "Wampler2": "nist_strd_wampler2",
    "Wampler3": "nist_strd_wampler3",
    "Wampler4": "nist_strd_wampler4",
    "Wampler5": "nist_strd_wampler5",
}

# The NoInt certificates' residual SD and uncentred R² are not in the shared json copies; typed
# from memory of the NIST certificates (each agrees with sqrt(SSE / df) to the digits given).
NOINT_RECALLED = {
    "NoInt1": {"residual_sd": 3.56753034006338, "r_squared": 0.999365492298663},
    "NoInt2": {"residual_sd": 0.369274472937998, "r_squared": 0.993348115299335},
}


@dataclass
class Dataset:
    """One StRD problem as a spreadsheet would hold it: x columns (powers already taken)."""

    name: str
    x: np.ndarray  # (n, k): the x columns as doubles
    y: np.ndarray
    intercept: bool
    certified: dict[str, float]  # "b0".."bk" (b0 the intercept), "se0"…, residual_sd, r_squared
    source: str

    @property
    def raw_x(self) -> np.ndarray:
        return self.x[:, 0]


def _number(text: str | float | int) -> float:
    return float(text) if not isinstance(text, str) else float(text.replace("Infinity", "inf"))


def load(name: str) -> Dataset:
    stem = DATASETS[name]
    doc = json.loads((REFERENCE / f"{stem}.json").read_text())
    table = np.loadtxt(REFERENCE / f"{stem}.csv", delimiter=",", skiprows=1, ndmin=2)
    x_raw, y = table[:, :-1], table[:, -1]
    certified: dict[str, float] = {}
    if "certified_text" in doc:
        cert = doc["certified_text"]
        intercept = bool(doc["intercept"])
        degree = doc.get("polynomial_degree")
        if degree:
            x = np.column_stack([np.power(x_raw[:, 0], j) for j in range(1, degree + 1)])
        else:
            x = x_raw
        for j, (b, se) in enumerate(zip(cert["coefficients"], cert["se"], strict=True)):
            certified[f"b{j}"] = _number(b)
            certified[f"se{j}"] = _number(se)
        for key in ("residual_sd", "r_squared", "ss_residual", "ss_regression", "f_statistic"):
            if key in cert:
                certified[key] = _number(cert[key])
        certified["df_residual"] = float(cert["df_residual"])
    else:  # the Norris / NoInt layout of the shared reference folder
        cert = doc["certified"]
        intercept = name == "Norris"
        x = x_raw
        if intercept:
            certified.update(b0=cert["intercept"], se0=cert["se_intercept"])
            certified.update(b1=cert["slope"], se1=cert["se_slope"])
            certified.update(residual_sd=cert["residual_sd"], r_squared=cert["r_squared"])
            certified.update(ss_regression=cert["ss_regression"], f_statistic=cert["f_statistic"])
        else:
            certified.update(b1=cert["slope"], se1=cert["se_slope"], **NOINT_RECALLED[name])
        certified["ss_residual"] = cert["ss_residual"]
        certified["df_residual"] = float(cert["df_residual"])
    return Dataset(name, x, y, intercept, certified, doc["source"])


def log_relative_error(computed: float, certified: float) -> float:
    """LRE as NIST scores it: -log10 of the relative error (absolute when certified is 0)."""
    if math.isinf(certified):
        return CERTIFIED_DIGITS if math.isinf(computed) or computed > 1e300 else 0.0
    if not math.isfinite(computed):
        return 0.0
    error = abs(computed - certified) / (abs(certified) if certified != 0 else 1.0)
    return CERTIFIED_DIGITS if error == 0 else max(0.0, min(CERTIFIED_DIGITS, -math.log10(error)))


# --- exact least squares on the stored doubles --------------------------------------------------


def _solve(matrix: list[list[Fraction]], rhs: list[list[Fraction]]) -> list[list[Fraction]]:
    """Gauss-Jordan elimination in exact rationals: matrix⁻¹ · rhs (columns of rhs)."""
    size = len(matrix)
    aug = [row[:] + [r[i] for r in rhs] for i, row in enumerate(matrix)]
    for col in range(size):
        pivot = next(r for r in range(col, size) if aug[r][col] != 0)
        aug[col], aug[pivot] = aug[pivot], aug[col]
        lead = aug[col][col]
        aug[col] = [v / lead for v in aug[col]]
        for r in range(size):
            if r != col and aug[r][col] != 0:
                factor = aug[r][col]
                aug[r] = [a - factor * b for a, b in zip(aug[r], aug[col], strict=True)]
    return [[aug[i][size + j] for i in range(size)] for j in range(len(rhs))]


def _sqrt(value: Fraction) -> float:
    with localcontext() as ctx:
        ctx.prec = 60
        return float((Decimal(value.numerator) / Decimal(value.denominator)).sqrt())


def exact_fit(x: np.ndarray, y: np.ndarray, intercept: bool) -> dict[str, float]:
    """The least-squares statistics of the doubles in x and y, computed exactly."""
    n, k = x.shape
    cols = ([[Fraction(1)] * n] if intercept else []) + [
        [Fraction(float(v)) for v in x[:, j]] for j in range(k)
    ]
    ys = [Fraction(float(v)) for v in y]
    p = len(cols)
    gram = [
        [sum((a * b for a, b in zip(ci, cj, strict=True)), Fraction(0)) for cj in cols]
        for ci in cols
    ]
    xty = [sum((a * b for a, b in zip(c, ys, strict=True)), Fraction(0)) for c in cols]
    unit = [[Fraction(int(i == j)) for i in range(p)] for j in range(p)]
    solved = _solve(gram, [xty, *unit])
    beta, inverse = solved[0], solved[1:]
    residuals = [
        yi - sum((c[i] * b for c, b in zip(cols, beta, strict=True)), Fraction(0))
        for i, yi in enumerate(ys)
    ]
    sse = sum((r * r for r in residuals), Fraction(0))
    mean = sum(ys, Fraction(0)) / n if intercept else Fraction(0)
    sst = sum(((v - mean) ** 2 for v in ys), Fraction(0))
    df = n - p
    s2 = sse / df
    out: dict[str, float] = {}
    offset = 0 if intercept else 1  # without a constant the first column is b1
    for j in range(p):
        out[f"b{j + offset}"] = float(beta[j])
        out[f"se{j + offset}"] = _sqrt(s2 * inverse[j][j])
    out["residual_sd"] = _sqrt(s2)
    out["r_squared"] = float(1 - sse / sst)
    out["ss_residual"] = float(sse)
    out["ss_regression"] = float(sst - sse)
    out["f_statistic"] = float(((sst - sse) / (p - int(intercept))) / s2) if sse else math.inf
    out["df_residual"] = float(df)
    return out


def certified_keys(data: Dataset) -> list[str]:
    """The statistics scored: coefficients, their SEs, residual SD and R² (the issue's minimum)."""
    return [k for k in data.certified if k[0] in "bs" and k[1:].isdigit()] + [
        "residual_sd",
        "r_squared",
    ]


def lre_of(values: dict[str, float], data: Dataset) -> dict[str, float]:
    return {k: log_relative_error(values[k], data.certified[k]) for k in certified_keys(data)}
