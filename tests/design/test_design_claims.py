"""Reading the claim beside a result (auditor.design.claims).

The phrases are invented examples of how conclusions are written in workbooks (common practice);
the p-value reading follows the policy's alpha.
"""

from __future__ import annotations

import pytest

from auditor.design.claims import claim_from_p, claim_from_texts, claim_in_text, read_claim
from auditor.model import ReportedValue


@pytest.mark.parametrize(
    "text",
    [
        "Conclusion: humidity has no effect on seal strength.",
        "Not significant",
        "n.s.",
        "No significant trend over 24 months",
        "Dwell time does not affect seal strength",
        "Assay remains stable at 25 °C",
        "Result is independent of line speed",
        "Non-significant slope",
    ],
)
def test_no_effect_phrases(text: str) -> None:
    assert claim_in_text(text) == "no-effect"


@pytest.mark.parametrize(
    "text",
    [
        "Belt speed significantly increases curl.",
        "The slope is significant at 5 %",
        "Scrap rises with web speed",
        "Yield depends on feed rate",
    ],
)
def test_effect_phrases(text: str) -> None:
    assert claim_in_text(text) == "effect"


@pytest.mark.parametrize(
    "text",
    [
        "Slope",
        "p-value (two-tailed)",
        "Significance F",
        "Impact strength vs temperature",
        "Influence of temperature on yield",
        "Regression statistics",
    ],
)
def test_labels_and_titles_claim_nothing(text: str) -> None:
    assert claim_in_text(text) is None


@pytest.mark.parametrize(
    ("value", "kind"),
    [
        (0.012, "effect"),
        (0.2, "no-effect"),
        ("<0.001", "effect"),
        ("p < .05", "effect"),
        ("n.s.", "no-effect"),
        ("> 0.1", "no-effect"),
        ("< 0.1", None),
        ("0.049", "effect"),
        (None, None),
        (True, None),
    ],
)
def test_reported_p_against_alpha(value: object, kind: str | None) -> None:
    assert claim_from_p(value, 0.05) == kind  # type: ignore[arg-type]


def test_words_win_over_the_p_value_and_nearest_words_win() -> None:
    reported = {"p_slope": ReportedValue("p_slope", "S!E12", 0.01, "=T.DIST.2T(…)")}
    texts = [("Slope", "S!D4"), ("No effect of humidity", "S!D15"), ("Significant", "S!A40")]
    claim = read_claim(reported, 0.05, texts)
    assert (claim.kind, claim.source, claim.cell) == ("no-effect", "text", "S!D15")
    assert read_claim(reported, 0.05).kind == "effect"
    assert read_claim({}, 0.05).kind is None
    assert claim_from_texts(["Slope", "n"]) is None
