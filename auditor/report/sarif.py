"""audit.sarif: the findings in SARIF 2.1.0, for code-review tools and CI pipelines.

How the result model maps onto SARIF (OASIS SARIF 2.1.0, errata 01):

    check (REGISTRY)        tool.driver.rules[]: id, shortDescription = summary,
                            fullDescription = its first paragraph, help = the whole docstring
                            (with the failing and the passing example)
    workbook                run.artifacts[]: its path as audited, a relative URI against
                            %SRCROOT% (the folder the audit ran in: the repository root in CI)
    finding                 run.results[]: ruleId = check id, level from severity
    finding.cells[0]        physicalLocation.region: row → startLine, column → startColumn
                            (a range also gives endLine, and endColumn one past its last
                            column, as SARIF's end column is exclusive); logicalLocation
                            ``Sheet!A1``; further cells become relatedLocations
    finding.identity        partialFingerprints["regauditIdentity/v1"]
    finding.waived          suppressions: kind "external" (the waiver file), status "accepted"
    unreadable workbook     invocations[0].toolExecutionNotifications, level "error"

Severity → level: critical and major → error, minor → warning, info → note.
The reporter reads the result model and the check registry (plain data: ids, summaries and
docstrings); it never opens a workbook.
"""

from __future__ import annotations

import json
import re
from pathlib import Path, PurePosixPath, PureWindowsPath
from typing import Any, BinaryIO
from urllib.parse import quote

from auditor.grid import A1_CELL, column_index, split_cell
from auditor.model import AuditResult, CheckInfo, Finding
from auditor.report.common import plain

SARIF_VERSION = "2.1.0"
SARIF_SCHEMA = (
    "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
)
FINGERPRINT = "regauditIdentity/v1"  # bump the version if the identity key ever changes shape
SOURCE_ROOT = "%SRCROOT%"
LEVELS: dict[str, str] = {"critical": "error", "major": "error", "minor": "warning", "info": "note"}


_LABEL = re.compile(r"^(Failing|Passing|Severity):")
_LABEL_ANYWHERE = re.compile(r"(?<!\S)(?=(?:Failing|Passing|Severity):)")


def doc_sections(doc: str) -> list[str]:
    """A check's docstring as paragraphs; each ``Failing:``/``Passing:``/``Severity:`` label
    starts a section of its own, at the start of a line or within one."""
    sections: list[str] = []
    for paragraph in re.split(r"\n\s*\n", doc.strip()):
        text = " ".join(paragraph.split())
        sections += [part.strip() for part in _LABEL_ANYWHERE.split(text) if part.strip()]
    return sections


def _example(sections: list[str], label: str) -> str | None:
    for section in sections:
        if section.startswith(label + ":"):
            return section.removeprefix(label + ":").strip()
    return None


def rule_descriptor(check: CheckInfo) -> dict[str, Any]:
    """One reportingDescriptor from a registered check."""
    sections = doc_sections(check.doc)
    markdown = "\n\n".join(_LABEL.sub(r"**\1:**", section) for section in sections)
    properties: dict[str, Any] = {"tags": [check.family], "scope": check.scope}
    for label, key in (("Failing", "failingExample"), ("Passing", "passingExample")):
        example = _example(sections, label)
        if example is not None:
            properties[key] = example
    return {
        "id": check.id,
        "name": "".join(word.capitalize() for word in check.id.split("-")),
        "shortDescription": {"text": check.summary},
        "fullDescription": {"text": sections[0] if sections else check.summary},
        "help": {"text": check.doc.strip() or check.summary, "markdown": markdown or check.summary},
        "properties": properties,
    }


def artifact_location(path: str) -> dict[str, Any]:
    """A relative path becomes a relative URI against %SRCROOT%; an absolute one a file URI."""
    if PureWindowsPath(path).is_absolute() or Path(path).is_absolute():
        return {"uri": Path(path).as_uri()}
    posix = PurePosixPath(PureWindowsPath(path).as_posix())
    return {"uri": quote(str(posix), safe="/"), "uriBaseId": SOURCE_ROOT}


def cell_region(cell: str) -> dict[str, int] | None:
    """``Sheet!E11`` → startLine 11, startColumn 5; a range adds its end (exclusive column)."""
    corners = split_cell(cell)[1].split(":")
    points = [A1_CELL.match(corner) for corner in corners]
    if not 1 <= len(points) <= 2 or any(point is None for point in points):
        return None  # whole columns or rows, or a name: no single place to point at
    rows = [int(p.group(4)) for p in points if p]
    columns = [column_index(p.group(2)) for p in points if p]
    region = {"startLine": min(rows), "startColumn": min(columns)}
    if len(points) == 2:
        region["endLine"] = max(rows)
        region["endColumn"] = max(columns) + 1
    return region


def _location(artifact: dict[str, Any], cell: str | None, index: int) -> dict[str, Any]:
    physical: dict[str, Any] = {"artifactLocation": {**artifact, "index": index}}
    location: dict[str, Any] = {"physicalLocation": physical}
    if cell:
        region = cell_region(cell)
        if region is not None:
            physical["region"] = region
        sheet, address = split_cell(cell)
        logical = {"name": address, "fullyQualifiedName": cell} if sheet else {"name": address}
        location["logicalLocations"] = [logical]
    return location


def _result(
    finding: Finding, rule_index: int, artifact: dict[str, Any], index: int, fingerprint: str
) -> dict[str, Any]:
    first = finding.cells[0] if finding.cells else None
    text = finding.message + (f" Fix: {finding.fix}" if finding.fix else "")
    entry: dict[str, Any] = {
        "ruleId": finding.check,
        "level": LEVELS[finding.severity],
        "message": {"text": text},
        "locations": [_location(artifact, first, index)],
        **({"partialFingerprints": {FINGERPRINT: fingerprint}} if fingerprint else {}),
        "properties": {
            "severity": finding.severity,
            "kind": finding.kind,
            "fix": finding.fix,
            "evidence": plain(finding.evidence),
        },
    }
    if rule_index >= 0:
        entry["ruleIndex"] = rule_index
    related = [
        {"id": number, **_location(artifact, cell, index)}
        for number, cell in enumerate(finding.cells[1:], start=1)
    ]
    if related:
        entry["relatedLocations"] = related
    if finding.waived is not None:
        entry["suppressions"] = [
            {"kind": "external", "status": "accepted", "justification": finding.waived}
        ]
    return entry


def sarif_document(result: AuditResult) -> dict[str, Any]:
    """The SARIF log of one result; rules from ``result.checks``, fingerprints from the
    identities the review step assigned (a finding without one gets no fingerprint)."""
    rules = [rule_descriptor(check) for check in result.checks]
    rule_index = {check.id: n for n, check in enumerate(result.checks)}
    artifacts: list[dict[str, Any]] = []
    results: list[dict[str, Any]] = []
    notifications: list[dict[str, Any]] = []
    for index, workbook in enumerate(result.workbooks):
        location = artifact_location(workbook.path)
        artifact: dict[str, Any] = {"location": location, "roles": ["analysisTarget"]}
        if workbook.sha256:
            artifact["hashes"] = {"sha-256": workbook.sha256}
        artifacts.append(artifact)
        if workbook.status == "unreadable":
            notifications.append(
                {
                    "level": "error",
                    "message": {"text": f"{workbook.path}: {workbook.error}"},
                    "locations": [_location(location, None, index)],
                }
            )
        for finding in workbook.all_findings():
            number = rule_index.get(finding.check, -1)
            results.append(_result(finding, number, location, index, finding.identity))
    for skipped in result.skipped:
        notifications.append(
            {
                "level": "warning",
                "message": {"text": f"not audited: {skipped.path}: {skipped.reason}"},
                "locations": [
                    {"physicalLocation": {"artifactLocation": artifact_location(skipped.path)}}
                ],
            }
        )
    run: dict[str, Any] = {
        "tool": {
            "driver": {
                "name": "regaudit",
                "version": result.version,
                "semanticVersion": result.version,
                "rules": rules,
            }
        },
        "invocations": [{"executionSuccessful": True, "toolExecutionNotifications": notifications}],
        "artifacts": artifacts,
        "results": results,
        "columnKind": "unicodeCodePoints",
        "properties": {"policy": result.policy, "generated": result.generated},
    }
    return {"$schema": SARIF_SCHEMA, "version": SARIF_VERSION, "runs": [run]}


def render_sarif(result: AuditResult) -> str:
    document = sarif_document(result)
    return json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


class SarifReporter:
    """Writes audit.sarif."""

    filename = "audit.sarif"

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        handle.write(render_sarif(result).encode("utf-8"))
