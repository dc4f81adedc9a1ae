"""An audit as pandas DataFrames, for model validators who work in notebooks.

    from auditor.frames import load_audit
    audit = load_audit("regaudit-out/audit.json")      # or the folder, or a ledger .sqlite
    audit.statistics.query("verdict == 'mismatch'")     # reported / as written / intended
    audit.findings.groupby("severity").size()
    audit.design[["regression", "sxx", "power", "sxx_needed"]]

Tables (one row per …):

    workbooks    workbook: path, sha256, status, error, regression and finding counts
    regressions  regression: workbook, regression, sheet, ranges, n, intercept, verdict
    statistics   reported statistic: the three values (reported, as_written, intended), the
                 verdict, the tolerance in words, the cell and its formula
    findings     finding: workbook, regression ("" for a workbook-level one), check, kind,
                 severity, cells, message, fix, identity, and the review decision
                 (decision, reason, decided_by, decided_on)
    design       regression: every design metric (Sxx, levels, leverage, power, …) as a column

``workbook`` is the path as audited; ``regression`` the regression's id within it. Numbers are
floats (NaN where absent); a reported value that was text (``<0.001``) stays text in
``reported`` and its number, if any, is not guessed.
"""

from __future__ import annotations

import json
import sqlite3
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pandas as pd

from auditor.errors import UsageError
from auditor.pipeline import resultjson

STATISTIC_COLUMNS = (
    "workbook", "regression", "statistic", "cell", "reported", "as_written", "intended",
    "verdict", "tolerance", "source", "formula",
)  # fmt: skip
FINDING_COLUMNS = (
    "workbook", "regression", "check", "kind", "severity", "cells", "message", "fix",
    "identity", "decision", "reason", "decided_by", "decided_on",
)  # fmt: skip


@dataclass
class AuditFrames:
    """One audit as five DataFrames (see the module's docstring for their rows)."""

    workbooks: pd.DataFrame
    regressions: pd.DataFrame
    statistics: pd.DataFrame
    findings: pd.DataFrame
    design: pd.DataFrame
    policy: str = ""
    version: str = ""


def _finding_row(workbook: str, regression: str, finding: dict[str, Any]) -> dict[str, Any]:
    waived = "waived" if finding.get("waived") else "open"
    decision = finding.get("decision") or {"decision": waived}
    return {
        "workbook": workbook,
        "regression": regression,
        "check": finding.get("check"),
        "kind": finding.get("kind"),
        "severity": finding.get("severity"),
        "cells": ", ".join(finding.get("cells") or []),
        "message": finding.get("message"),
        "fix": finding.get("fix"),
        "identity": finding.get("identity", ""),
        "decision": decision.get("decision", "open"),
        "reason": decision.get("reason", ""),
        "decided_by": decision.get("name", ""),
        "decided_on": decision.get("date", ""),
    }


def frames_from_document(document: dict[str, Any]) -> AuditFrames:
    """DataFrames from an audit.json document (already parsed)."""
    books, regressions, statistics, findings, design = [], [], [], [], []
    for workbook in document.get("workbooks", []):
        path = workbook["path"]
        owned = [_finding_row(path, "", f) for f in workbook.get("findings", [])]
        for regression in workbook.get("regressions", []):
            rid = regression["id"]
            regressions.append(
                {
                    "workbook": path,
                    "regression": rid,
                    "sheet": regression.get("sheet"),
                    "label": regression.get("label", ""),
                    "x_range": regression.get("x_range"),
                    "y_range": regression.get("y_range"),
                    "found_by": regression.get("found_by"),
                    "n": regression.get("n"),
                    "intercept": regression.get("intercept"),
                    "x_columns": regression.get("x_columns", 1),
                    "verdict": regression.get("verdict"),
                }
            )
            for key, value in regression.get("reported", {}).items():
                statistics.append(
                    {
                        "workbook": path,
                        "regression": rid,
                        "statistic": key,
                        "cell": value.get("cell"),
                        "reported": value.get("value"),
                        "as_written": value.get("as_written"),
                        "intended": value.get("intended"),
                        "verdict": value.get("verdict"),
                        "tolerance": value.get("tolerance", ""),
                        "source": value.get("source", ""),
                        "formula": value.get("formula"),
                    }
                )
            design.append({"workbook": path, "regression": rid, **regression.get("design", {})})
            owned += [_finding_row(path, rid, f) for f in regression.get("findings", [])]
        findings += owned
        books.append(
            {
                "workbook": path,
                "sha256": workbook.get("sha256", ""),
                "status": workbook.get("status"),
                "error": workbook.get("error"),
                "regressions": len(workbook.get("regressions", [])),
                "findings": len(owned),
            }
        )
    book_columns = ("workbook", "sha256", "status", "error", "regressions", "findings")
    return AuditFrames(
        workbooks=_frame(books, book_columns),
        regressions=_frame(regressions, ("workbook", "regression", "sheet", "n", "verdict")),
        statistics=_numeric(_frame(statistics, STATISTIC_COLUMNS), ("as_written", "intended")),
        findings=_frame(findings, FINDING_COLUMNS),
        design=_frame(design, ("workbook", "regression")),
        policy=str(document.get("policy", "")),
        version=str(document.get("tool", {}).get("version", "")),
    )


def _frame(rows: list[dict[str, Any]], columns: tuple[str, ...]) -> pd.DataFrame:
    # Empty audits still give the documented columns, so code written against them runs.
    return pd.DataFrame(rows) if rows else pd.DataFrame(columns=list(columns))


def _numeric(frame: pd.DataFrame, columns: tuple[str, ...]) -> pd.DataFrame:
    for column in columns:
        frame[column] = pd.to_numeric(frame[column], errors="coerce").astype(float)
    return frame


def _ledger_document(path: Path, policy: str | None) -> dict[str, Any]:
    """The latest recorded audit of every file in the ledger (under ``policy`` if given)."""
    query = (
        "SELECT a.path, a.result, a.policy, a.version FROM audits a JOIN ("
        " SELECT path, MAX(id) AS id FROM audits WHERE (? IS NULL OR policy = ?) GROUP BY path"
        ") latest ON a.id = latest.id ORDER BY a.path"
    )
    try:
        with sqlite3.connect(f"file:{path}?mode=ro", uri=True) as db:
            rows = db.execute(query, (policy, policy)).fetchall()
    except sqlite3.DatabaseError as exc:
        raise UsageError(f"{str(path)!r} is not a regaudit ledger ({exc})") from exc
    workbooks = []
    for file_path, payload, _, _ in rows:
        result = resultjson.loads(payload)
        result.path = file_path
        workbooks.append(result.to_dict())
    policies = sorted({row[2] for row in rows})
    versions = sorted({row[3] for row in rows})
    return {
        "policy": ", ".join(policies),
        "tool": {"name": "regaudit", "version": ", ".join(versions)},
        "workbooks": workbooks,
    }


def load_audit(source: str | Path, policy: str | None = None) -> AuditFrames:
    """Load an audit: an ``audit.json``, the folder holding one, or a ledger (``.sqlite``; the
    latest audit of every file, under ``policy`` when given)."""
    path = Path(source)
    if path.is_dir():
        path = path / "audit.json"
    if not path.is_file():
        raise UsageError(f"no audit at {str(source)!r}: give audit.json, its folder or a ledger")
    with open(path, "rb") as handle:
        head = handle.read(16)
    if head.startswith(b"SQLite format 3"):
        return frames_from_document(_ledger_document(path, policy))
    try:
        document = json.loads(path.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise UsageError(f"{str(path)!r} is neither audit.json nor a ledger ({exc})") from exc
    return frames_from_document(document)
