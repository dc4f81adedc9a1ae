"""How many digits a fit's data allow: condition numbers, and the agreement they justify.

Two condition numbers describe a design (columns scaled to unit length, the 2-norm ratio of the
largest to the smallest singular value):

* **centred** — the x columns after their means are taken out (with an intercept): the slopes'
  own conditioning, what a careful engine that centres its columns faces;
* **with the constant** — the x columns beside the column of ones, not centred: what an engine
  that works on the raw columns faces, and what the intercept's digits depend on.

A double carries about 15.95 significant digits; a backward-stable solver loses about
log10(condition number) of them, so the digits left are 15.95 − log10(κ) (common practice,
e.g. Higham, *Accuracy and Stability of Numerical Algorithms*, ch. 20, from memory).

Two double-precision engines (a spreadsheet's LINEST and this tool) may then differ in each
statistic by the first-order perturbation bound of :func:`engine_allowances`: the stored-value
tolerance widens to cover that, and an exact fit (residuals only rounding noise) gets an absolute
floor, since 1e-9 relative of a true 0 is 0.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
from numpy.typing import NDArray

from auditor.fit.distributions import t_pdf, t_ppf
from auditor.fit.sums import exact_sum

EPSILON = 2.220446049250313e-16  # double precision
DOUBLE_DIGITS = 15.95  # log10(2**53)

# The bounds of ``engine_allowances`` are first-order estimates without the constants of the
# backward-error theorems, so they carry this factor. Measured: LibreOffice's stored LINEST values
# on the NIST StRD workbooks (fixtures/strd/) reach at most 0.022 of the unscaled bound; numpy's
# Householder QR on the raw design reaches 0.77 and its SVD solver on the column-scaled design 6.1
# over 600 random polynomial fits of degree 2-5 (tests/test_fit_accuracy.py). A mistake (rows
# dropped, a wrong column, a one-tailed p) moves a value by far more than ten times the bound.
ENGINE_FACTOR = 10.0

# Beyond this relative tolerance no double-precision engine's value can be judged: the fit is
# too ill-conditioned to tell an engine's rounding from a mistake (e.g. a degree-10 polynomial).
UNJUDGEABLE_RELATIVE = 1e-3


@dataclass(frozen=True)
class AllowanceInputs:
    """What :func:`engine_allowances` needs, kept so that it runs only when a value is judged
    (the diagnosis refits hundreds of times and never reads them)."""

    x: NDArray[np.float64]
    y: NDArray[np.float64]
    intercept: bool
    coefficients: NDArray[np.float64]  # the constant first when there is one
    inverse_diagonal: NDArray[np.float64]
    ss_residual: float
    ss_total: float
    df: int


@dataclass(frozen=True)
class Conditioning:
    """The conditioning of one fit's design and which solver gave its intended values."""

    condition_number: float  # scaled columns beside the constant (not centred)
    condition_number_centred: float  # centred (with an intercept) and scaled: the slopes'
    # "exact" (rational arithmetic on the stored doubles), "refined" (QR with residuals in twice
    # double precision, for fits too large for exact arithmetic) or "double" (QR alone)
    solver: str
    inputs: AllowanceInputs | None = field(default=None, repr=False, compare=False)

    @cached_property
    def allowances(self) -> Mapping[str, float]:
        """Statistic key → the absolute difference two sound double-precision engines may show
        (:func:`engine_allowances`); empty when the fit's statistics are not attached."""
        if self.inputs is None:
            return {}
        i = self.inputs
        return engine_allowances(
            i.x,
            i.y,
            i.intercept,
            self.condition_number,
            i.coefficients,
            i.inverse_diagonal,
            i.ss_residual,
            i.ss_total,
            i.df,
        )

    @property
    def digits_at_risk(self) -> float:
        return _log10(self.condition_number)

    @property
    def digits_left(self) -> float:
        """Significant digits a double-precision engine keeps in the worst coefficient."""
        return max(0.0, min(DOUBLE_DIGITS, DOUBLE_DIGITS - self.digits_at_risk))

    def to_dict(self) -> dict[str, float | str]:
        return {
            "condition_number": _rounded(self.condition_number),
            "condition_number_centred": _rounded(self.condition_number_centred),
            "digits_at_risk": round(self.digits_at_risk, 1),
            "digits_left": round(self.digits_left, 1),
            "solver": self.solver,
        }


def _log10(value: float) -> float:
    return math.log10(value) if math.isfinite(value) and value > 1.0 else 0.0


def _rounded(value: float) -> float:
    return float(f"{value:.4g}") if math.isfinite(value) else math.inf


def simple_conditioning(n: int, x_mean: float, sxx: float, intercept: bool) -> tuple[float, float]:
    """(with the constant, centred) condition numbers of one x column, in closed form.

    The scaled columns 1/√n and x/‖x‖ have Gram matrix [[1, c], [c, 1]] with c = Σx/(√n‖x‖):
    κ = √((1 + c)/(1 − c)) = (1 + c)·‖x‖/√Sxx, since 1 − c² = Sxx/‖x‖²; and ‖x‖² = Sxx + n·x̄²,
    so the two-pass mean and Sxx already known give it with no pass over the data.
    """
    if not intercept:
        return 1.0, 1.0
    norm_sq = sxx + n * x_mean * x_mean
    if not sxx > 0.0:
        return math.inf, math.inf
    cosine = min(1.0, abs(x_mean) * math.sqrt(n / norm_sq))
    return (1.0 + cosine) * math.sqrt(norm_sq / sxx), 1.0


def design_conditioning(
    r_scaled: NDArray[np.float64],
    norms: NDArray[np.float64],
    means: NDArray[np.float64],
    n: int,
    intercept: bool,
) -> tuple[float, float]:
    """(with the constant, centred) condition numbers from the QR of the centred, scaled columns.

    With X_c = Q·R_s·D (D the centred norms, Q orthogonal to the ones when centred), the scaled
    design [1/√n, X/‖X‖] equals [1/√n, Q]·[[1, √n·m'/u], [0, R_s·D/u]] (u the raw column
    norms), so both numbers come from small triangular matrices: no second pass over the data.
    """
    centred = _cond(r_scaled)
    if not intercept:
        return centred, centred
    raw_norms = np.sqrt(norms * norms + n * means * means)
    k = r_scaled.shape[0]
    top = np.zeros((k + 1, k + 1))
    top[0, 0] = 1.0
    top[0, 1:] = math.sqrt(n) * means / raw_norms
    top[1:, 1:] = r_scaled * (norms / raw_norms)[np.newaxis, :]
    return _cond(top), centred


def _cond(matrix: NDArray[np.float64]) -> float:
    singular = np.linalg.svd(matrix, compute_uv=False)
    if singular.size == 0 or singular[-1] <= 0.0:
        return math.inf
    return float(singular[0] / singular[-1])


def engine_allowances(
    x: NDArray[np.float64],
    y: NDArray[np.float64],
    intercept: bool,
    kappa: float,
    coefficients: NDArray[np.float64],
    inverse_diagonal: NDArray[np.float64],
    ss_residual: float,
    ss_total: float,
    df: int,
    factor: float = ENGINE_FACTOR,
) -> dict[str, float]:
    """Per statistic, how far a sound double-precision engine's value may lie from the exact one.

    First-order perturbation bounds of least squares (common practice, e.g. Björck, *Numerical
    Methods for Least Squares Problems*, §1.4, from memory), with the columns a_j scaled to unit
    length and z_j = |b_j|·‖a_j‖ the coefficients in those units:

    * coefficient j: eps·√g_jj·(√p·‖z‖ + κ·‖r‖), g_jj the diagonal of (A'A)⁻¹ — the rounding
      of the large terms (x⁵ with z ≈ ‖y‖) lands on every coefficient in proportion to its own
      standard-error factor, so the intercept beside x⁵ absorbs most of it;
    * residual SD: eps·(√p·‖z‖ + ‖y‖ + κ·‖r‖)/√df — the rounding left in the residuals, which
      is all there is of them in an exact fit (Wampler1: LibreOffice reports s = 4e-10 where
      the truth is 0);
    * standard errors: √g_jj·(that + s·eps·κ); t, p, intervals, SS, R² and F by propagation.

    Each bound is multiplied by ``factor`` (see :data:`ENGINE_FACTOR`).
    """
    n, k = x.shape
    # The constant's column: n ones, whose exact sum of squares is n itself.
    constant = [math.sqrt(float(n))] if intercept else []
    norms = np.array(constant + [math.sqrt(exact_sum(x[:, j] * x[:, j])) for j in range(k)])
    if not (math.isfinite(kappa) and np.all(norms > 0.0) and df > 0):
        return {}
    scale = factor * EPSILON * max(kappa, 1.0)
    residual_norm = math.sqrt(max(ss_residual, 0.0))
    scaled_norm = float(np.linalg.norm(np.abs(coefficients) * norms))
    roots = np.sqrt(np.maximum(inverse_diagonal, 0.0))
    # δb = (A'A)⁻¹A'·δA·b + (A'A)⁻¹·δA'·r with ‖δA‖ ≈ eps·‖A‖ column by column: coefficient j
    # moves by about eps·√g_jj·(√p·‖z‖ + κ·‖r‖), g_jj the diagonal of (A'A)⁻¹.
    coef = factor * EPSILON * roots * (math.sqrt(len(norms)) * scaled_norm + kappa * residual_norm)
    s = math.sqrt(max(ss_residual, 0.0) / df)
    # δr = −(I − P)·δA·b − (A⁺)'·δA'·r + (I − P)·δy: about eps·(√p·‖z‖ + ‖y‖ + κ·‖r‖), all of
    # the residuals of an exact fit; s moves by that over √df.
    y_norm = math.sqrt(exact_sum(y * y))
    noise = math.sqrt(len(norms)) * scaled_norm + y_norm + kappa * residual_norm
    sd = factor * EPSILON * noise / math.sqrt(df)
    se = roots * (sd + s * scale)
    ss_res = 2.0 * residual_norm * math.sqrt(df) * sd + df * sd * sd
    t_crit = float(t_ppf(0.975, df))
    out: dict[str, float] = {
        "residual_sd": sd,
        "ss_residual": ss_res,
        "ss_regression": ss_res,
    }
    if ss_total > 0.0:
        out["r_squared"] = ss_res / ss_total
    if ss_residual > 0.0:
        ss_reg = max(ss_total - ss_residual, 0.0)
        out["f"] = (ss_reg / ss_residual) * (ss_res / ss_residual) * df / max(k, 1)
    names = (["intercept"] if intercept else []) + [
        "slope" if k == 1 else f"slope[{j}]" for j in range(1, k + 1)
    ]
    # As Python floats (tolist): the same doubles, and scalar arithmetic without numpy's.
    for name, b, allow_b, g_root, allow_se in zip(
        names, coefficients.tolist(), coef.tolist(), roots.tolist(), se.tolist(), strict=True
    ):
        suffix = name[len("slope") :] if name.startswith("slope") else ""
        base = "slope" if name.startswith("slope") else "intercept"
        out[name] = float(allow_b)
        out[f"se_{base}{suffix}"] = float(allow_se)
        se_value = s * float(g_root)
        if base == "slope":
            out[f"ci_slope_low{suffix}"] = float(allow_b + t_crit * allow_se)
            out[f"ci_slope_high{suffix}"] = float(allow_b + t_crit * allow_se)
        if se_value > 0.0 and b != 0.0:
            t = float(b) / se_value
            allow_t = abs(t) * (float(allow_b) / abs(float(b)) + float(allow_se) / se_value)
            out[f"t_{base}{suffix}"] = allow_t
            # dp/dt of the two-sided p is twice the t density: p moves by about 2·f(t)·δt.
            out[f"p_{base}{suffix}"] = 2.0 * float(t_pdf(abs(t), df)) * allow_t
    return out
