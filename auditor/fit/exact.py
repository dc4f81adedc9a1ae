"""Least squares in exact arithmetic on the stored doubles, for fits whose conditioning puts
digits at risk.

A spreadsheet's cells are doubles, and every double is a rational number: the least-squares
solution of those numbers is therefore a well-defined rational, and Python's integers compute it
exactly. Each column is turned into integers over one power of two (``float.as_integer_ratio``),
the cross products are integer dot products, the normal equations are solved by Gauss-Jordan
elimination in ``fractions.Fraction`` (exact, so the squared condition number of X'X costs
nothing), and the residuals are exact integers over one common denominator. Every statistic is
rounded to a double only at the end (Python's ``int / int`` rounds correctly), so the results
carry all the digits the data carry: the exact-arithmetic ceiling of NIST's StRD tables.

The cost grows with n·p² big-integer products (p = columns, the constant included), so
:mod:`auditor.fit.lstsq` calls this only when the condition number says the double-precision
factorisation may lose digits, and only within :data:`EXACT_BUDGET`.
"""

from __future__ import annotations

import math
import operator
from dataclasses import dataclass
from fractions import Fraction

import numpy as np
from numpy.typing import NDArray

# n · p² at or below this: the exact solve takes well under 0.1 s (measured: Filip, 82 × 11,
# 12 ms; 20,000 rows × 3 columns, 60 ms).
EXACT_BUDGET = 400_000


@dataclass(frozen=True)
class ExactSolution:
    """Coefficients and the quantities standard errors need, each rounded once from exact."""

    coefficients: NDArray[np.float64]  # the constant first when there is one
    inverse_diagonal: NDArray[np.float64]  # diag((A'A)⁻¹), same order
    residuals: NDArray[np.float64]
    ss_residual: float
    ss_total: float  # centred with a constant, uncentred without
    ss_regression: float  # ss_total − ss_residual, subtracted before rounding


def within_budget(n: int, columns: int) -> bool:
    return n * columns * columns <= EXACT_BUDGET


def _integer_column(values: NDArray[np.float64]) -> tuple[list[int], int]:
    """Integers N and a power of two D with values[i] == N[i] / D exactly."""
    ratios = [float(v).as_integer_ratio() for v in values.tolist()]
    scale = max(den for _, den in ratios)
    return [num * (scale // den) for num, den in ratios], scale


def _dot(a: list[int], b: list[int]) -> int:
    return sum(map(operator.mul, a, b))


def _gauss_jordan(matrix: list[list[Fraction]], extra: int) -> list[list[Fraction]] | None:
    """Reduce [M | R] in place to [I | M⁻¹R]; None when M is singular."""
    size = len(matrix)
    for col in range(size):
        pivot = next((r for r in range(col, size) if matrix[r][col] != 0), None)
        if pivot is None:
            return None
        matrix[col], matrix[pivot] = matrix[pivot], matrix[col]
        lead = matrix[col][col]
        row = [v / lead for v in matrix[col]]
        matrix[col] = row
        for r in range(size):
            factor = matrix[r][col]
            if r != col and factor != 0:
                matrix[r] = [a - factor * b for a, b in zip(matrix[r], row, strict=True)]
    return [r[size : size + extra] for r in matrix]


def solve_exact(
    x: NDArray[np.float64], y: NDArray[np.float64], intercept: bool
) -> ExactSolution | None:
    """The exact least-squares fit of y on the columns of x (and a constant); None if singular."""
    n, k = x.shape
    columns = [_integer_column(x[:, j]) for j in range(k)]
    if intercept:
        columns.insert(0, ([1] * n, 1))
    y_int, y_scale = _integer_column(y)
    p = len(columns)
    # A'A and A'y as exact rationals: integer dot products over the product of the scales.
    gram = [[Fraction(_dot(ci, cj), si * sj) for cj, sj in columns] for ci, si in columns]
    xty = [Fraction(_dot(c, y_int), s * y_scale) for c, s in columns]
    augmented = [
        row + [xty[i]] + [Fraction(int(i == j)) for j in range(p)] for i, row in enumerate(gram)
    ]
    reduced = _gauss_jordan(augmented, p + 1)
    if reduced is None:
        return None
    beta = [row[0] for row in reduced]
    inverse_diagonal = [reduced[j][1 + j] for j in range(p)]
    # Residuals over one common denominator T: r_i = (y_i T - sum_j N_ij c_j) / T, all integer.
    common = math.lcm(*(b.denominator for b in beta))
    scales = [s for _, s in columns] + [y_scale]
    total = common * max(scales)
    weights = [
        b.numerator * (total // (b.denominator * s))
        for b, (_, s) in zip(beta, columns, strict=True)
    ]
    y_weight = total // y_scale
    scaled = [yi * y_weight for yi in y_int]
    for (col, _), w in zip(columns, weights, strict=True):
        if w:
            scaled = [r - c * w for r, c in zip(scaled, col, strict=True)]
    sse_numerator = sum(r * r for r in scaled)
    total_sq = total * total
    y_sum = sum(y_int)
    y_sq = sum(v * v for v in y_int)
    if intercept:  # sum (y - ybar)^2 = (n sum Y^2 - (sum Y)^2) / (n D^2)
        ss_total = Fraction(n * y_sq - y_sum * y_sum, n * y_scale * y_scale)
    else:
        ss_total = Fraction(y_sq, y_scale * y_scale)
    ss_residual = Fraction(sse_numerator, total_sq)
    return ExactSolution(
        coefficients=np.array([float(b) for b in beta]),
        inverse_diagonal=np.array([float(g) for g in inverse_diagonal]),
        residuals=np.array([r / total for r in scaled]),
        ss_residual=float(ss_residual),
        ss_total=float(ss_total),
        ss_regression=float(ss_total - ss_residual),
    )
