"""Candidate x designs for a straight line, before any data are collected.

Given n (or several n), the x interval, an expected residual SD and a target (an SE, a CI
half-width, or a slope to detect with the policy's power), each candidate layout is scored:
its Sxx, the predicted SE(b1) = σ/√Sxx, the CI half-width, the power (noncentral t), whether
lack of fit can be tested, and whether it meets the target and the policy.

Layouts: evenly spaced; evenly spaced with both ends replicated; two-end (half the points at each
end: the smallest SE for n, but no curvature can be seen); and the policy's minimum number of
levels with the points shared out as replicates (extra points go to the ends first, which adds
the most Sxx).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from auditor.design.power import even_levels, slope_power, sxx_of, sxx_to_detect
from auditor.fit.distributions import t_ppf
from auditor.policy import Policy


@dataclass
class PlanRequest:
    n_values: list[int]
    x_low: float
    x_high: float
    sigma: float  # expected residual SD
    target_se: float | None = None
    target_half_width: float | None = None
    detect_slope: float | None = None
    origin: str = ""  # where the numbers came from, in words

    def targets(self) -> list[str]:
        out = []
        if self.target_se is not None:
            out.append(f"SE(b1) ≤ {self.target_se:g}")
        if self.target_half_width is not None:
            out.append(f"CI half-width ≤ {self.target_half_width:g}")
        if self.detect_slope is not None:
            out.append(f"detect a slope of {self.detect_slope:g}")
        return out


@dataclass
class Candidate:
    design: str
    n: int
    x: list[float]
    sxx: float
    se: float
    half_width: float
    power: float | None
    levels: int
    replicated_levels: int
    meets_target: bool | None  # None when no target was given
    meets_policy: bool
    notes: list[str] = field(default_factory=list)

    @property
    def lack_of_fit_testable(self) -> bool:
        return self.replicated_levels > 0 and self.levels > 2

    def to_dict(self) -> dict[str, Any]:
        return {
            "design": self.design,
            "n": self.n,
            "levels": self.levels,
            "replicated_levels": self.replicated_levels,
            "x": self.x,
            "sxx": self.sxx,
            "se_slope": self.se,
            "ci_half_width": self.half_width,
            "power": self.power,
            "lack_of_fit_testable": self.lack_of_fit_testable,
            "meets_target": self.meets_target,
            "meets_policy": self.meets_policy,
            "notes": self.notes,
        }


def _spread(levels: np.ndarray, counts: list[int]) -> list[float]:
    return [float(v) for v, c in zip(levels, counts, strict=True) for _ in range(c)]


def _ends_first(total: int, levels: int) -> list[int]:
    """``total`` points over ``levels`` levels, as equal as possible, extras to the ends first."""
    counts = [total // levels] * levels
    order = []
    low, high = 0, levels - 1
    while low <= high:
        order.extend([low] if low == high else [low, high])
        low, high = low + 1, high - 1
    for index in order[: total % levels]:
        counts[index] += 1
    return counts


def layouts(n: int, low: float, high: float, min_levels: int) -> list[tuple[str, list[float]]]:
    """The candidate layouts for n points over [low, high] (those that n allows)."""
    out = [("evenly spaced", [float(v) for v in even_levels(n, low, high)])]
    if n >= 5:
        inner = even_levels(n - 2, low, high)
        counts = [2] + [1] * (n - 4) + [2]
        out.append(("evenly spaced, ends replicated", _spread(inner, counts)))
    out.append(("two-end", [low] * (n // 2) + [high] * (n - n // 2)))
    if min_levels >= 3 and n > min_levels:
        counts = _ends_first(n, min_levels)
        levels = even_levels(min_levels, low, high)
        out.append((f"{min_levels} levels (policy minimum), replicated", _spread(levels, counts)))
    return out


def candidates(request: PlanRequest, policy: Policy) -> list[Candidate]:
    alpha, power_target = policy.alpha, policy.get("power")
    confidence = policy.get("confidence")
    min_levels = int(policy.get("min_levels"))
    strict = bool(policy.find("require_linearity_evidence"))
    out = []
    for n in request.n_values:
        df = n - 2
        critical = float(t_ppf(0.5 + confidence / 2.0, df))
        seen: list[list[float]] = []
        for design, x in layouts(n, request.x_low, request.x_high, min_levels):
            if x in seen:
                continue  # e.g. 7 points: "ends replicated" is already the 5-level layout
            seen.append(x)
            sxx = sxx_of(x)
            se = request.sigma / math.sqrt(sxx)
            power = (
                slope_power(request.detect_slope, request.sigma, sxx, df, alpha)
                if request.detect_slope is not None
                else None
            )
            counts: dict[float, int] = {}
            for value in x:
                counts[value] = counts.get(value, 0) + 1
            levels = len(counts)
            replicated = sum(1 for c in counts.values() if c > 1)
            checks = []
            if request.target_se is not None:
                checks.append(se <= request.target_se)
            if request.target_half_width is not None:
                checks.append(critical * se <= request.target_half_width)
            if power is not None:
                checks.append(power >= power_target)
            candidate = Candidate(
                design=design,
                n=n,
                x=x,
                sxx=sxx,
                se=se,
                half_width=critical * se,
                power=power,
                levels=levels,
                replicated_levels=replicated,
                meets_target=all(checks) if checks else None,
                meets_policy=levels >= min_levels,
            )
            if strict and not candidate.lack_of_fit_testable:
                candidate.meets_policy = False
                candidate.notes.append("no lack-of-fit test (the policy requires one)")
            if levels < 3:
                candidate.notes.append("cannot show curvature")
            if levels < min_levels:
                candidate.notes.append(f"fewer than the policy's {min_levels} levels")
            out.append(candidate)
    return out


def best(found: list[Candidate]) -> Candidate | None:
    """The smallest n that meets both the target and the policy; the smallest SE among those."""
    good = [c for c in found if c.meets_policy and c.meets_target is not False]
    if not good:
        return None
    return min(good, key=lambda c: (c.n, c.se))


def needed_sxx(request: PlanRequest, policy: Policy, n: int) -> float | None:
    """The Sxx the target asks for at n points (the largest of the targets given)."""
    df = n - 2
    needs = []
    if request.target_se is not None:
        needs.append((request.sigma / request.target_se) ** 2)
    if request.target_half_width is not None:
        critical = float(t_ppf(0.5 + policy.get("confidence") / 2.0, df))
        needs.append((critical * request.sigma / request.target_half_width) ** 2)
    if request.detect_slope is not None:
        needs.append(
            sxx_to_detect(
                request.detect_slope, request.sigma, df, policy.alpha, policy.get("power")
            )
        )
    return max(needs) if needs else None


def reach_hint(request: PlanRequest, policy: Policy) -> str:
    """What it would take to meet the target: more points over the interval, or a wider one."""
    n = request.n_values[-1]
    need = needed_sxx(request, policy, n)
    if need is None:
        return ""
    low, high = request.x_low, request.x_high
    from auditor.design.power import smallest_n, sxx_even, width_for_sxx_even

    def need_at(df: int) -> float:
        other = PlanRequest(
            [df + 2],
            low,
            high,
            request.sigma,
            request.target_se,
            request.target_half_width,
            request.detect_slope,
        )
        return needed_sxx(other, policy, df + 2) or 0.0

    count = smallest_n(lambda k: sxx_even(k, low, high), need_at, 3, 100_000)
    width = width_for_sxx_even(need, n)
    more = f"n ≥ {count} evenly spaced over {low:g}–{high:g}" if count else ""
    wider = f"{n} evenly spaced points spanning at least {width:.4g} in x"
    return "To meet the target: " + (f"{more}, or " if more else "") + wider + "."
