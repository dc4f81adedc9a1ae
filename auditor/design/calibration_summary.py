"""The run summary row of one calibration curve: each acceptance verdict in a word or two.

One row per curve (analyte and run as the workbook names them) for the text summary and the audit
workbook; the reporters read the row from the result model (``RegressionResult.calibration``).
Verdicts: "pass", "fail", "note" (a risk without failing), "—" (nothing to judge).
"""

from __future__ import annotations

from typing import Any

from auditor.design.calibration import CalibrationInputs, judges_calibration
from auditor.design.calibration_review import review_curve
from auditor.grid import column_letter
from auditor.locate.spec import RegressionSpec
from auditor.model import SEVERITY_RANK, Finding
from auditor.policy import Policy

NOTHING = "—"

# What a curve that cannot be judged shows (the reporters name the columns).
JUDGED_KEYS = ("weighting", "standards", "spread", "shape", "limits", "samples", "target_tests")


def _worst(findings: list[Finding], check_id: str) -> str | None:
    severities = [f.severity for f in findings if f.check == check_id]
    return min(severities, key=lambda s: SEVERITY_RANK[s]) if severities else None


def _word(findings: list[Finding], check_id: str, judged: bool) -> str:
    if not judged:
        return NOTHING
    worst = _worst(findings, check_id)
    if worst in ("critical", "major"):
        return "fail"
    return "note" if worst == "minor" else "pass"


def summary_row(
    spec: RegressionSpec,
    inputs: CalibrationInputs | None,
    policy: Policy,
    findings: list[Finding],
) -> dict[str, Any]:
    """The row for a curve judged as a calibration; an empty dict for any other regression."""
    if inputs is None or not judges_calibration(policy):
        return {}
    review = review_curve(inputs, policy)
    header = spec.label or inputs.curve_name or f"{spec.y.sheet}!{column_letter(spec.y.c1)}"
    row: dict[str, Any] = {"curve": header, "run": spec.y.sheet}
    if review is None:
        row.update({key: NOTHING for key in JUDGED_KEYS})
        row["verdict"] = "not judged (not a straight-line curve of 3+ levels)"
        return row
    verdict = review.standards
    if verdict is not None:
        standards = f"{'pass' if verdict.accepted else 'fail'} {verdict.passed}/{verdict.non_zero}"
    else:
        standards = NOTHING
    samples = review.samples
    outside = sum(1 for s in samples if not s.found.inside)
    wrong = sum(1 for s in samples if s.agrees is False)
    limits = [f"{c.kind} {c.reproduced_by or 'not reproduced'}" for c in review.limit_checks]
    row.update(
        {
            "weighting": review.curve.scheme,
            "standards": standards,
            "spread": _word(findings, "scatter-grows", review.spread is not None),
            "shape": _word(findings, "residual-shape", True),
            "limits": "; ".join(limits) if limits else NOTHING,
            "samples": (
                f"{len(samples)} read, {outside} outside, {wrong} differ" if samples else NOTHING
            ),
            "target_tests": _word(findings, "target-test-recomputed", bool(inputs.target_tests)),
            "intercept_zero_p": review.intercept_zero.p_value,
        }
    )
    failing = [
        f for f in findings if f.check in CURVE_CHECKS and f.severity in ("critical", "major")
    ]
    row["verdict"] = "fail" if failing or (verdict and not verdict.accepted) else "pass"
    return row


# The checks whose major findings fail the curve itself (samples and limits are judged apart).
CURVE_CHECKS = frozenset(
    {
        "standards-acceptance",
        "read-back-reported",
        "scatter-grows",
        "weighted-fit-recomputed",
        "residual-shape",
        "target-test-recomputed",
    }
)
