"""summary.txt: header counts, the regression table, findings by severity, the caution."""

from __future__ import annotations

import io

from test_report_sample import UNREADABLE_ERROR, sample_result

from auditor.model import AuditResult, WorkbookResult
from auditor.report.text import TextReporter, finding_block, render_text


def test_header_counts() -> None:
    lines = render_text(sample_result()).splitlines()
    assert lines[0] == "regaudit 0.1.0: regression audit summary"
    assert "policy: calibration" in lines
    assert "date: 2024-05-06T07:08:09Z" in lines
    assert "workbooks: 2 (audited 1, unreadable 1, no-regressions 0)" in lines
    assert "regressions: 2" in lines
    assert "findings: 4 (critical 1, major 1, minor 1, info 1)" in lines


def _row(text: str, regression_id: str) -> list[str]:
    row = next(line for line in text.splitlines() if line.startswith(regression_id + " "))
    # Columns are separated by two or more spaces in the "simple" format.
    return [cell.strip() for cell in row.split("  ") if cell.strip()]


def test_table_rows_pair_reported_with_intended() -> None:
    text = render_text(sample_result())
    assert _row(text, "calib-1") == [
        "calib-1",
        "8",
        "2.01452",  # reported and intended agree: shown once
        "0.8123",
        "2.48002",
        "0.0213* / 0.0426",  # the one-tailed p is marked as disagreeing
        "mismatch",
    ]
    assert _row(text, "drift-1") == [
        "drift-1",
        "6",
        "-0.000123457",
        "— / 1.5e-06",
        "— / -82.3045",
        "<0.001 / 1.23e-07",  # a text claim that holds: both shown, no mark
        "confirmed",
    ]


def test_findings_most_severe_first() -> None:
    text = render_text(sample_result())
    titles = [
        "[CRITICAL] p-value-tails (p-one-tailed) Calib!F7",
        "[MAJOR] formula-range (range-short) Calib!F4, Calib!A2:A9",
        "[MINOR] constant-in-formula (hardcoded-constant) Drift!E3",
        "[INFO] workbook-context",
    ]
    positions = [text.index(title + "\n") for title in titles]
    assert positions == sorted(positions)
    assert "\n    fix: Use =T.DIST.2T(ABS(t), df) or TDIST(ABS(t), df, 2).\n" in text


def test_finding_block_wraps_and_indents() -> None:
    finding = sample_result().workbooks[0].regressions[0].findings[0]
    finding.message = "word " * 60
    lines = finding_block(finding)
    assert lines[0] == "[CRITICAL] p-value-tails (p-one-tailed) Calib!F7"
    assert len(lines) > 4
    assert all(len(line) <= 100 and line.startswith("    ") for line in lines[1:])


def test_unreadable_workbook_says_why() -> None:
    text = render_text(sample_result())
    assert "== scanned-copy.xlsx: unreadable\n" in text  # relative to the shared folder lab/
    assert f"    could not be read: {UNREADABLE_ERROR}\n" in text


def test_computed_reported_values_are_announced() -> None:
    result = sample_result()
    assert "no stored values" not in render_text(result)
    result.workbooks[0].stored_values = False
    text = render_text(result)
    section = text[text.index("== calibration") : text.index("calib-1")]
    assert "This file carries no stored values" in section
    assert "computed by regaudit" in section


def test_caution_closes_the_summary() -> None:
    text = render_text(sample_result())
    caution = text[text.index("Caution:") :]
    assert text.index("Caution:") > text.index("[INFO] workbook-context")
    joined = " ".join(caution.split())
    assert "does not judge whether a method or a result is fit for its purpose" in joined
    assert "released laboratory results or safety decisions" in joined
    assert "local regulations and licensed professional practice decide." in joined
    assert text.endswith("decide.\n")


def test_prose_lines_stay_within_width() -> None:
    text = render_text(sample_result())
    table_lines = {line for line in text.splitlines() if " / " in line or line.startswith("---")}
    table_lines |= {line for line in text.splitlines() if line.startswith("regression ")}
    assert all(len(line) <= 100 for line in text.splitlines() if line not in table_lines)


def test_no_regressions_and_empty_result() -> None:
    empty = WorkbookResult(path="lab/notes.xlsx", sha256="c" * 64, status="no-regressions")
    result = AuditResult(version="0.1.0", policy="general", workbooks=[empty])
    text = render_text(result)
    assert "date: not recorded" in text
    assert "No regression was found in this workbook." in text
    assert "== notes.xlsx: no-regressions; 0 regression(s); findings: none" in text
    assert "findings: 0 (critical 0, major 0, minor 0, info 0)" in text


def test_reporter_writes_utf8() -> None:
    handle = io.BytesIO()
    TextReporter().write(sample_result(), handle)
    assert handle.getvalue().decode("utf-8") == render_text(sample_result())
    assert "—".encode() in handle.getvalue()
