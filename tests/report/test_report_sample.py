"""A hand-built AuditResult shared by the reporter tests (imported, not a fixture of conftest).

Two workbooks: one audited with two regressions and findings of every severity, one unreadable.
The numbers are invented but consistent (t = slope / SE) so a reader can follow them.
"""

from __future__ import annotations

import math

from auditor.model import AuditResult, Finding, RegressionResult, ReportedValue, WorkbookResult

AUDITED_PATH = "lab/calibration-2024.xlsx"
UNREADABLE_PATH = "lab/scanned-copy.xlsx"
UNREADABLE_ERROR = "the file is a PDF document saved with an .xlsx name, not a workbook"


def _value(key: str, cell: str, value, intended, verdict="confirmed", formula=None):
    return ReportedValue(
        key=key,
        cell=cell,
        value=value,
        formula=formula,
        as_written=value if isinstance(value, float) else None,
        intended=intended,
        verdict=verdict,
        tolerance="1e-9 relative",
    )


def first_regression() -> RegressionResult:
    findings = [
        Finding(
            check="p-value-tails",
            severity="critical",
            kind="p-one-tailed",
            cells=["Calib!F7"],
            message="The p-value is one-tailed (0.0213); the two-tailed value is 0.0426, so the "
            "slope is not significant at the policy's alpha 0.01.",
            evidence={"reported": 0.0213, "two_tailed": 0.0426, "alpha": 0.01, "ratio": math.nan},
            fix="Use =T.DIST.2T(ABS(t), df) or TDIST(ABS(t), df, 2).",
        ),
        Finding(
            check="formula-range",
            severity="major",
            kind="range-short",
            cells=["Calib!F4", "Calib!A2:A9"],
            message="=SLOPE(B2:B8,A2:A8) leaves out row 9 of the data table.",
            evidence={"formula_rows": [2, 8], "table_rows": [2, 9]},
            fix="Extend both ranges to row 9.",
        ),
    ]
    return RegressionResult(
        id="calib-1",
        sheet="Calib",
        x_range="Calib!A2:A9",
        y_range="Calib!B2:B9",
        found_by="formulas",
        n=8,
        intercept=True,
        intended={"slope": 2.01452, "se_slope": 0.8123, "t_slope": 2.48002, "p_slope": 0.0426},
        reported={
            "slope": _value("slope", "Calib!F4", 2.01452, 2.01452, formula="=SLOPE(B2:B8,A2:A8)"),
            "se_slope": _value("se_slope", "Calib!F5", 0.8123, 0.8123),
            "t_slope": _value("t_slope", "Calib!F6", 2.48002, 2.48002),
            "p_slope": _value("p_slope", "Calib!F7", 0.0213, 0.0426, verdict="mismatch"),
        },
        design={"sxx": 42.0, "x_min": 1.0, "x_max": 8.0, "levels": 8, "max_leverage": math.inf},
        findings=findings,
    )


def second_regression() -> RegressionResult:
    findings = [
        Finding(
            check="constant-in-formula",
            severity="minor",
            kind="hardcoded-constant",
            cells=["Drift!E3"],
            message="The degrees of freedom are typed as 4 instead of computed; still right today.",
            evidence={"typed": 4, "computed": 4},
            fix="Compute them: =COUNT(B2:B7)-2.",
        ),
    ]
    return RegressionResult(
        id="drift-1",
        sheet="Drift",
        x_range="Drift!A2:A7",
        y_range="Drift!B2:B7",
        found_by="names",
        n=6,
        intercept=True,
        intended={
            "slope": -0.000123456789,
            "se_slope": 1.5e-06,
            "t_slope": -82.30452,
            "p_slope": 1.2345e-07,
        },
        reported={
            "slope": _value("slope", "Drift!E1", -0.000123456789, -0.000123456789),
            "p_slope": _value("p_slope", "Drift!E2", "<0.001", 1.2345e-07, formula=None),
        },
        findings=findings,
    )


def sample_result() -> AuditResult:
    audited = WorkbookResult(
        path=AUDITED_PATH,
        sha256="a" * 64,
        status="audited",
        regressions=[first_regression(), second_regression()],
        findings=[
            Finding(
                check="workbook-context",
                severity="info",
                message="Two regressions were found by formula scan and defined names.",
            )
        ],
    )
    unreadable = WorkbookResult(
        path=UNREADABLE_PATH,
        sha256="b" * 64,
        status="unreadable",
        error=UNREADABLE_ERROR,
        failure="file",
    )
    return AuditResult(
        version="0.1.0",
        policy="calibration",
        workbooks=[audited, unreadable],
        generated="2024-05-06T07:08:09Z",
        inputs=["lab"],
    )
