"""What a reviewer reads: verdicts that agree with the shown columns and the findings, evidence
in words, the legend once, recurring advice once, relative links, files of other formats listed."""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
from test_report_sample import sample_result

from auditor.model import (
    AuditResult,
    Finding,
    RegressionResult,
    ReportedValue,
    SkippedFile,
    WorkbookResult,
)
from auditor.report import write_reports
from auditor.report.evidence_words import evidence_words
from auditor.report.text import render_text, shared_advice
from auditor.report.verdicts import row_verdict, verdict_categories

SHOWN = ("slope", "se_slope", "t_slope", "p_slope")


def _regression(
    verdicts: dict[str, str], findings: list[Finding] | None = None
) -> RegressionResult:
    reported = {
        key: ReportedValue(key=key, cell=f"S!E{n}", value=1.0, formula=None, verdict=verdict)  # type: ignore[arg-type]
        for n, (key, verdict) in enumerate(verdicts.items(), start=2)
    }
    return RegressionResult(
        id="r", sheet="S", x_range="S!A2:A9", y_range="S!B2:B9", found_by="formulas", n=8,
        intercept=True, reported=reported, findings=findings or [],
    )  # fmt: skip


def _major() -> Finding:
    return Finding(check="x-spread-too-narrow", severity="major", message="narrow")


def test_a_mismatch_outside_the_shown_columns_is_named() -> None:
    regression = _regression({"slope": "confirmed", "r_squared": "mismatch"})
    assert regression.verdict == "mismatch"  # the model's verdict covers every statistic
    assert row_verdict(regression, SHOWN).text == "mismatch in R²"
    both = _regression({"p_slope": "mismatch", "df": "mismatch"})
    assert row_verdict(both, SHOWN).text == "mismatch (also df)"
    assert row_verdict(_regression({"p_slope": "mismatch"}), SHOWN).text == "mismatch"


def test_no_green_confirmed_beside_a_major_finding() -> None:
    regression = _regression({"slope": "confirmed", "p_slope": "confirmed"}, [_major()])
    assert regression.verdict == "confirmed"
    shown = row_verdict(regression, SHOWN)
    assert shown.text == "agrees; major finding" and shown.tone == "major"
    minor = Finding(check="c", severity="minor", message="m")
    assert row_verdict(_regression({"slope": "confirmed"}, [minor]), SHOWN).text == "confirmed"


def test_partly_unverifiable_is_said_and_counted() -> None:
    part = _regression({"slope": "confirmed", "p_slope": "unverifiable"})
    assert row_verdict(part, SHOWN).text == "confirmed in part (p unverifiable)"
    nothing = _regression({"p_slope": "unverifiable"})
    counts = verdict_categories([part, nothing, _regression({"slope": "confirmed"})], SHOWN)
    # Only categories that occur: no "unverifiable 0" beside unverifiable statistics.
    assert counts == {
        "confirmed in part (some values unverifiable)": 1,
        "confirmed": 1,
        "unverifiable": 1,
    }


def test_evidence_in_words_not_json() -> None:
    text = evidence_words(
        {
            "key": "p_slope",
            "reported": 0.0370566,
            "intended": 0.0741132,
            "tolerance": "the same to 9 significant digits",
            "rows": list(range(2, 14)),
            "values": {"x": 1.5, "y": None},
            "missing": None,
        }
    )
    assert text == (
        "statistic: p-value of the slope; reported: 0.0370566; the data give: 0.0741132; "
        "judged: the same to 9 significant digits; rows: 2, 3, 4, 5, 6, 7, 8, 9, … (12 in all); "
        "values: (x 1.5, y —)"
    )
    assert "{" not in text and "[" not in text


def test_summary_says_the_legend_once_and_lists_other_formats() -> None:
    result = sample_result()
    result.workbooks.append(
        WorkbookResult("lab/other.xlsx", "c" * 64, "audited", regressions=[_regression({})])
    )
    result.skipped = [SkippedFile("lab/old.xls", "old.xls is a legacy Excel 97-2003 workbook")]
    text = render_text(result)
    assert text.count("How to read the tables:") == 1
    assert text.count("Severity: critical") == 1
    assert "not audited: 1 file(s) of other formats" in text
    assert "    lab/old.xls: old.xls is a legacy Excel 97-2003 workbook\n" in text


def test_recurring_advice_is_printed_once() -> None:
    tail = "Keep at least three levels so that a straight line can be told from a curve, always."
    findings = [
        Finding(check="a", severity="major", message="m", fix=f"Add a point at x = 9. {tail}"),
        Finding(check="b", severity="minor", message="m", fix=f"Repeat row 4. {tail}"),
    ]
    assert shared_advice(findings) == {tail: 1}
    result = AuditResult(
        "0.1.0", "general", [WorkbookResult("a.xlsx", "d" * 64, "audited", findings=findings)]
    )
    text = render_text(result)
    assert text.count(tail) == 1
    assert "fix: Add a point at x = 9. See advice A1 below." in text
    assert "fix: Repeat row 4. See advice A1 below." in text


def test_stored_prefixes_never_reach_a_message_or_fix() -> None:
    finding = Finding(
        check="c",
        severity="major",
        message="here =_xlfn.T.DIST.RT(ABS(E11),E9)",
        fix="use =_xlfn.T.DIST.2T(ABS(E11),E9)",
        evidence={"formula": "=_xlfn.T.DIST.RT(ABS(E11),E9)"},
    )
    assert finding.message == "here =T.DIST.RT(ABS(E11),E9)"
    assert finding.fix == "use =T.DIST.2T(ABS(E11),E9)"
    assert finding.evidence["formula"].startswith("=_xlfn.")  # evidence keeps the stored text


def test_links_are_relative_to_the_report(tmp_path: Path) -> None:
    result = sample_result()
    out = tmp_path / "reports"
    result.workbooks[0].path = str(tmp_path / "lab" / "calibration 2024.xlsx")
    result.skipped = [SkippedFile(str(tmp_path / "lab" / "old.ods"), "an OpenDocument sheet")]
    write_reports(result, out, ["xlsx", "json", "sarif"])
    book = openpyxl.load_workbook(out / "audit.xlsx")
    sheet = book["Regressions"]
    header = [cell.value for cell in sheet[1]]
    source = sheet.cell(row=2, column=header.index("source cell") + 1).value
    assert source == '=HYPERLINK("../lab/calibration%202024.xlsx#\'Calib\'!F4","Calib!F4")'
    overview = [(row[0], row[1]) for row in book["Overview"].iter_rows(values_only=True)]
    assert (str(tmp_path / "lab" / "old.ods"), "an OpenDocument sheet") in overview
    assert ("unverifiable", 0) not in overview
    document = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    assert document["skipped"] == [
        {"path": str(tmp_path / "lab" / "old.ods"), "reason": "an OpenDocument sheet"}
    ]
    sarif = json.loads((out / "audit.sarif").read_text(encoding="utf-8"))
    notes = sarif["runs"][0]["invocations"][0]["toolExecutionNotifications"]
    assert any(
        "not audited" in n["message"]["text"] and "old.ods" in n["message"]["text"] for n in notes
    )


def test_repeated_minor_findings_are_brief_and_major_ones_in_full() -> None:
    def finding(severity: str, cell: str) -> Finding:
        return Finding(
            check="ranges-disagree", severity=severity, cells=[cell],  # type: ignore[arg-type]
            message=f"The x range of {cell} ends a row early. Its y range does not.",
            fix="Extend the range to the table's last row.",
        )  # fmt: skip

    findings = [finding("minor", "S!E4"), finding("minor", "S!E5"), finding("major", "S!E6")]
    findings.append(finding("major", "S!E7"))
    result = AuditResult(
        "0.1.0", "general", [WorkbookResult("a.xlsx", "e" * 64, "audited", findings=findings)]
    )
    text = render_text(result)
    assert text.count("fix: Extend the range to the table's last row.") == 3  # 1 minor, 2 major
    assert (
        "[MINOR] ranges-disagree S!E5\n    The x range of S!E5 ends a row early. (fix as above)\n"
        in text
    )
    assert text.count("Its y range does not.") == 3
