"""What a regression is said to show: "no effect", or an effect.

Read from the words the author wrote beside the result ("Conclusion: humidity has no effect",
"not significant", "assay is stable"), else from the reported p-value against the policy's alpha.
The design checks judge the design against this claim: a "no effect" claim needs a design that
could have detected the slope that matters; an "effect" claim should not rest on one point.

The words are matched with plain patterns (negated phrases first, so "not significant" is not read
as "significant"); a text without either kind of claim is ignored.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from auditor.compare.precision import parse_text_number
from auditor.model import ReportedValue

ClaimKind = Literal["no-effect", "effect"]

_WHAT = (
    r"(effect|relationship|relation|correlation|association|dependence|influence|impact|trend|"
    r"link|drift|change|slope)"
)
_NO_EFFECT = [
    re.compile(p, re.I)
    for p in (
        r"\bno\s+(\w+\s+){0,2}" + _WHAT + r"s?\b",  # "no effect", "no significant trend"
        r"\bnot\s+(statistically\s+)?significant",
        r"\b(non-?|in)significant\b",
        r"^\s*n\.?\s?s\.?\s*$",
        r"\b(does|do|did|has|have|had)\s*(not|n't)\s+(significantly\s+)?"
        r"(affect|influence|change|depend|matter|drift|trend|correlate|impact)",
        r"\b(has|have|had|shows?|showed)\s+no\b",
        r"\bindependent\s+of\b",
        r"\bunaffected\b",
        r"\bno\s+evidence\b",
        r"\bnegligible\b",
        r"\b(is|are|was|were|remains?|remained)\s+stable\b",
    )
]
_EFFECT = [
    re.compile(p, re.I)
    for p in (
        r"\bsignificant(ly)?\b",
        r"\b(increases?|decreases?|rises?|falls?|grows?|declines?|drops?)\s+(with|as|when)\b",
        r"\b(affects|depends\s+on)\b",  # verbs only: "Impact strength" is a title
        r"\b(clear|strong|real)\s+" + _WHAT + r"\b",
    )
]


def claim_in_text(text: str) -> ClaimKind | None:
    """'Conclusion: humidity has no effect' -> 'no-effect'; 'slope is significant' -> 'effect'."""
    if not isinstance(text, str) or len(text) > 400:
        return None
    return _claim_in(text)


@lru_cache(maxsize=4096)
def _claim_in(text: str) -> ClaimKind | None:
    """claim_in_text's reading of one text: each design check of each regression asks again
    about the same words around it."""
    if any(p.search(text) for p in _NO_EFFECT):
        return "no-effect"
    if any(p.search(text) for p in _EFFECT):
        return "effect"
    return None


@dataclass(frozen=True)
class Claim:
    """The claim a regression supports, and where it was read."""

    kind: ClaimKind | None  # None: nothing was claimed (no p reported, no words)
    source: str  # "text", "p-value" or "none"
    text: str = ""  # the words, or the reported p as shown
    cell: str | None = None

    def describe(self) -> str:
        if self.kind is None:
            return "no claim stated"
        said = "no effect" if self.kind == "no-effect" else "an effect"
        where = f" in {self.cell}" if self.cell else ""
        if self.source == "text":
            return f"the workbook concludes {said}{where} ({self.text!r})"
        return f"the reported p{where} is {self.text}, which reads as {said}"


def claim_from_texts(texts: Iterable[str | tuple[str, str | None]]) -> Claim | None:
    """The first text (caller orders them, nearest first) that states a claim.

    Items are texts or (text, cell) pairs.
    """
    for item in texts:
        text, cell = (item, None) if isinstance(item, str) else item
        kind = claim_in_text(text)
        if kind is not None:
            return Claim(kind, "text", text.strip(), cell)
    return None


def claim_from_p(value: float | str | None, alpha: float) -> ClaimKind | None:
    """A reported p (a number, or text such as '<0.001', 'n.s.', 'p > 0.1') read at ``alpha``."""
    if isinstance(value, bool) or value is None:
        return None
    if isinstance(value, (int, float)):
        return "effect" if value < alpha else "no-effect"
    text = value.strip().lower().replace("≤", "<=").replace("≥", ">=")
    text = re.sub(r"^p\s*", "", text)
    if claim_in_text(text) == "no-effect":
        return "no-effect"
    match = re.fullmatch(r"(<=|>=|<|>|=)?\s*(.+)", text)
    number = parse_text_number(match.group(2)) if match else None
    if number is None or match is None:
        return None
    op = match.group(1) or "="
    if op in ("<", "<="):
        return "effect" if number <= alpha else None  # "< 0.1" says nothing at alpha 0.05
    if op in (">", ">="):
        return "no-effect" if number >= alpha else None
    return "effect" if number < alpha else "no-effect"


def read_claim(
    reported: dict[str, ReportedValue],
    alpha: float,
    texts: Iterable[str | tuple[str, str | None]] = (),
) -> Claim:
    """Words beside the result win; else the reported p-value of the slope; else no claim."""
    stated = claim_from_texts(texts)
    if stated is not None:
        return stated
    for key in sorted(k for k in reported if k.split("@")[0] == "p_slope"):
        value = reported[key]
        kind = claim_from_p(value.value, alpha)
        if kind is not None:
            shown = value.value if isinstance(value.value, str) else f"{value.value:.3g}"
            return Claim(kind, "p-value", str(shown), value.cell)
    return Claim(None, "none")
