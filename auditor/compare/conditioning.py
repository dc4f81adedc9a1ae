"""Agreement of an engine's stored value at the precision the fit's conditioning allows.

A fixed relative tolerance fails both ways on real data: an ill-conditioned fit (polynomial
columns x, x², …, x⁵) legitimately differs between two double-precision engines by 1e-9 … 1e-7
relative, and an exact fit (all points on the curve) leaves rounding noise of 1e-10 in standard
errors whose true value is 0, which no relative tolerance admits. Here the tolerance is the wider
of the relative one (``compare.precision.agree_stored``) and the engine allowance of
:func:`auditor.fit.conditioning.engine_allowances` for that statistic, and the comparison record
says which applied and why:

* ``"±3.1e-09: condition number 2.2e+03 leaves a double-precision engine about 12.6 of the 16
  digits (engine allowance)"``;
* when the allowance is wider than :data:`~auditor.fit.conditioning.UNJUDGEABLE_RELATIVE` of the
  value, the value is "unverifiable", never a mismatch nor confirmed: the fit is too
  ill-conditioned to tell an engine's rounding from a mistake.
"""

from __future__ import annotations

from auditor.compare.precision import Agreement, agree_stored
from auditor.fit.conditioning import UNJUDGEABLE_RELATIVE, Conditioning
from auditor.model import stat_base


def engine_allowance(key: str, conditioning: Conditioning | None) -> float:
    """The absolute engine allowance for a statistic key (``"slope[2]@E9"`` → ``slope[2]``)."""
    if conditioning is None:
        return 0.0
    return conditioning.allowances.get(stat_base(key), 0.0)


def agree_conditioned(
    reported: float,
    true: float,
    key: str,
    rel: float,
    scale: float | None,
    conditioning: Conditioning | None,
) -> Agreement:
    """``agree_stored`` widened to the engine allowance, with the reason in the tolerance."""
    plain = agree_stored(reported, true, rel=rel, scale=scale)
    allowance = engine_allowance(key, conditioning)
    if conditioning is None or plain.allowed is None or allowance <= plain.allowed:
        return plain
    agrees = abs(reported - true) <= allowance
    why = (
        f"±{allowance:.2g}: condition number {conditioning.condition_number:.3g} leaves a "
        f"double-precision engine about {conditioning.digits_left:.1f} of the 16 digits "
        "(engine allowance)"
    )
    if true == 0.0:
        why += "; the true value is 0 (an exact fit): engines leave rounding noise"
    elif allowance > UNJUDGEABLE_RELATIVE * abs(true):
        return Agreement(
            None,
            f"{why}; wider than {UNJUDGEABLE_RELATIVE:g} of the value, so an engine's rounding "
            "cannot be told from a mistake",
            allowance,
        )
    return Agreement(agrees, why, allowance)
