"""The result model: plain data classes that every reporter reads.

The core (read, locate, extract, fit, checks) builds these; reporters only consume them and never
open source workbooks. ``to_dict`` gives the JSON contract of ``audit.json`` (see the design).
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field
from typing import Any, Literal

Severity = Literal["critical", "major", "minor", "info"]
SEVERITIES: tuple[Severity, ...] = ("critical", "major", "minor", "info")
SEVERITY_RANK: dict[str, int] = {name: rank for rank, name in enumerate(SEVERITIES)}

Verdict = Literal["confirmed", "mismatch", "unverifiable"]
WorkbookStatus = Literal["audited", "unreadable", "no-regressions"]
FailureCause = Literal["file", "limit", "regaudit", "cluster"]  # why "unreadable"
FoundBy = Literal[
    "names", "formulas", "bindings", "labels", "trendline", "pasted-table", "hand-built"
]

JSON_FORMAT = 1

# Statistic keys of the JSON contract, in the order reports show them.
STAT_KEYS: tuple[str, ...] = (
    "slope", "intercept", "se_slope", "se_intercept", "t_slope", "t_intercept", "p_slope",
    "p_intercept", "df", "n", "residual_sd", "r_squared", "r", "f", "ss_regression",
    "ss_residual", "ci_slope_low", "ci_slope_high",
)  # fmt: skip


def stat_base(key: str) -> str:
    """'p_slope@E9' (a second cell holding the p-value) -> 'p_slope'."""
    return key.split("@", 1)[0]


def clean_number(value: Any) -> Any:
    """JSON has no NaN or infinity: they become None."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _strip_storage_prefixes(text: str) -> str:
    return text.replace("_xlfn._xlws.", "").replace("_xlfn.", "").replace("_xlws.", "")


@dataclass
class Finding:
    """One problem (or one piece of context) found by a check."""

    check: str
    severity: Severity
    message: str
    kind: str | None = None
    cells: list[str] = field(default_factory=list)
    evidence: dict[str, Any] = field(default_factory=dict)
    fix: str = ""
    # Stable across runs and row moves (auditor.review.identity); set after the audit.
    identity: str = ""
    waived: str | None = None  # the waiver's reason, who accepted it and when; None if not waived
    # The reviewer's decision: {"decision": "waived", "reason", "name", "date"}; None while open.
    decision: dict[str, str] | None = None

    def __post_init__(self) -> None:
        # Newer functions are stored as _xlfn.T.DIST.2T; a reader types (and sees) T.DIST.2T.
        # Evidence keeps the formulas exactly as stored.
        self.message = _strip_storage_prefixes(self.message)
        self.fix = _strip_storage_prefixes(self.fix)

    def to_dict(self) -> dict[str, Any]:
        return {
            "check": self.check,
            "kind": self.kind,
            "severity": self.severity,
            "cells": list(self.cells),
            "message": self.message,
            "evidence": {k: clean_number(v) for k, v in self.evidence.items()},
            "fix": self.fix,
            "identity": self.identity,
            "waived": self.waived,
            "decision": dict(self.decision) if self.decision else {"decision": "open"},
        }


@dataclass
class ReportedValue:
    """One reported statistic: the three values and the verdict on them."""

    key: str  # a STAT_KEYS entry, "[j]" for the j-th x column; "@A1" for a second cell of it
    cell: str  # "Sheet!A1"
    value: float | str | None  # what the author saw: stored value, typed constant or text claim
    formula: str | None  # the cell's formula, None for a typed constant
    as_written: float | None = None  # what the formula computes over the ranges it references
    intended: float | None = None  # the independent fit over the intended data table
    verdict: Verdict = "unverifiable"
    tolerance: str = ""  # how agreement was judged, in words ("1e-9 relative", "4 decimals")
    source: str = "stored"  # stored | typed | text | evaluated (no stored value in the file)
    note: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {
            "cell": self.cell,
            "value": clean_number(self.value),
            "formula": self.formula,
            "as_written": clean_number(self.as_written),
            "intended": clean_number(self.intended),
            "verdict": self.verdict,
            "tolerance": self.tolerance,
            "source": self.source,
            "note": self.note,
        }


@dataclass(slots=True)  # one per data row: 200,000 of them in a large table
class DataPoint:
    """One row of the intended data table, with what happened to it."""

    row: int
    x: list[float | None]
    y: float | None
    used: bool  # in the intended fit
    used_as_written: bool  # seen by the author's formulas
    reason: str = ""  # why it was dropped, parsed or left out
    fitted: float | None = None  # from the intended fit, for used points
    residual: float | None = None
    leverage: float | None = None
    cooks_distance: float | None = None

    def to_dict(self) -> dict[str, Any]:
        return {
            "row": self.row,
            "x": [clean_number(v) for v in self.x],
            "y": clean_number(self.y),
            "used": self.used,
            "used_as_written": self.used_as_written,
            "reason": self.reason,
            "fitted": clean_number(self.fitted),
            "residual": clean_number(self.residual),
            "leverage": clean_number(self.leverage),
            "cooks_distance": clean_number(self.cooks_distance),
        }


@dataclass
class RegressionResult:
    id: str
    sheet: str
    x_range: str
    y_range: str
    found_by: FoundBy
    n: int
    intercept: bool
    x_columns: int = 1
    intended: dict[str, Any] = field(default_factory=dict)
    reported: dict[str, ReportedValue] = field(default_factory=dict)
    design: dict[str, Any] = field(default_factory=dict)
    findings: list[Finding] = field(default_factory=list)
    data: list[DataPoint] = field(default_factory=list)
    intended_x_range: str = ""
    intended_y_range: str = ""
    label: str = ""  # the block's own title where the workbook gives one
    policy: str = ""  # the policy that judged it (auto: chosen per regression)
    policy_reason: str = ""  # why that policy, in words
    calibration: dict[str, Any] = field(default_factory=dict)  # the run summary row of a curve
    # Condition numbers of the design and the digits they leave (auditor.fit.conditioning); empty
    # when the fit is undefined.
    conditioning: dict[str, Any] = field(default_factory=dict)

    @property
    def verdict(self) -> Verdict:
        verdicts = {r.verdict for r in self.reported.values()}
        if "mismatch" in verdicts:
            return "mismatch"
        if "confirmed" in verdicts:
            return "confirmed"
        return "unverifiable"

    @property
    def worst_severity(self) -> Severity | None:
        return worst(self.findings)

    def to_dict(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "sheet": self.sheet,
            "label": self.label,
            "x_range": self.x_range,
            "y_range": self.y_range,
            "intended_x_range": self.intended_x_range,
            "intended_y_range": self.intended_y_range,
            "found_by": self.found_by,
            "n": self.n,
            "intercept": self.intercept,
            "x_columns": self.x_columns,
            "verdict": self.verdict,
            "intended": {k: clean_number(v) for k, v in self.intended.items()},
            "reported": {k: v.to_dict() for k, v in self.reported.items()},
            "design": {k: clean_number(v) for k, v in self.design.items()},
            "conditioning": {k: clean_number(v) for k, v in self.conditioning.items()},
            "findings": [f.to_dict() for f in self.findings],
            "policy": self.policy,
            "policy_reason": self.policy_reason,
            "calibration": {k: clean_number(v) for k, v in self.calibration.items()},
        }


@dataclass
class WorkbookResult:
    path: str
    sha256: str
    status: WorkbookStatus
    error: str | None = None
    stored_values: bool = True
    regressions: list[RegressionResult] = field(default_factory=list)
    findings: list[Finding] = field(default_factory=list)  # workbook-level findings
    failure: FailureCause | None = None  # with "unreadable": the file, a limit, regaudit, …

    def all_findings(self) -> list[Finding]:
        return list(self.findings) + [f for r in self.regressions for f in r.findings]

    def to_dict(self) -> dict[str, Any]:
        return {
            "path": self.path,
            "sha256": self.sha256,
            "status": self.status,
            "error": self.error,
            "failure": self.failure,
            "stored_values": self.stored_values,
            "regressions": [r.to_dict() for r in self.regressions],
            "findings": [f.to_dict() for f in self.findings],
        }


@dataclass(frozen=True)
class CheckInfo:
    """What a report may say about a check: its id, summary and documentation (the registry in
    :mod:`auditor.checks` is the source; reporters read this copy and never import the checks)."""

    id: str
    summary: str
    doc: str = ""
    family: str = ""
    scope: str = "regression"


@dataclass
class SkippedFile:
    """A file found in an audited folder but not audited (another format), with why."""

    path: str
    reason: str

    def to_dict(self) -> dict[str, Any]:
        return {"path": self.path, "reason": self.reason}


@dataclass
class AuditResult:
    version: str
    policy: str
    workbooks: list[WorkbookResult]
    generated: str = ""  # ISO date shown in reports; fixed by --timestamp / SOURCE_DATE_EPOCH
    inputs: list[str] = field(default_factory=list)
    checks: list[CheckInfo] = field(default_factory=list)  # the checks this run ran, for SARIF
    skipped: list[SkippedFile] = field(default_factory=list)  # other formats beside the inputs

    def all_findings(self) -> list[Finding]:
        return [f for w in self.workbooks for f in w.all_findings()]

    def totals(self) -> dict[str, Any]:
        by_severity = {name: 0 for name in SEVERITIES}
        for finding in self.all_findings():
            by_severity[finding.severity] += 1
        by_status = dict(Counter(workbook.status for workbook in self.workbooks))
        return {
            "workbooks": len(self.workbooks),
            "regressions": sum(len(w.regressions) for w in self.workbooks),
            "findings_by_severity": by_severity,
            "workbooks_by_status": by_status,
        }

    def to_dict(self) -> dict[str, Any]:
        return {
            "format": JSON_FORMAT,
            "tool": {"name": "regaudit", "version": self.version},
            "policy": self.policy,
            "generated": self.generated,
            "workbooks": [w.to_dict() for w in self.workbooks],
            "skipped": [s.to_dict() for s in self.skipped],
            "totals": self.totals(),
        }


def worst(findings: list[Finding]) -> Severity | None:
    return min(findings, key=lambda f: SEVERITY_RANK[f.severity]).severity if findings else None
