"""audit.json: the contract in the design, checked against tests/schema/audit.schema.json."""

from __future__ import annotations

import copy
import io
import json
from pathlib import Path
from typing import Any

import jsonschema
import numpy as np
import pytest
from test_report_sample import AUDITED_PATH, UNREADABLE_ERROR, sample_result

from auditor.report.json import JsonReporter, audit_document, render_json

SCHEMA_PATH = Path(__file__).parents[1] / "schema" / "audit.schema.json"


@pytest.fixture(scope="module")
def validator() -> jsonschema.Draft202012Validator:
    schema = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def _document() -> dict[str, Any]:
    return json.loads(render_json(sample_result()))


def test_document_validates(validator: jsonschema.Draft202012Validator) -> None:
    errors = list(validator.iter_errors(_document()))
    assert errors == []


def test_keys_follow_the_model_order_and_format_is_versioned() -> None:
    document = _document()
    assert list(document)[:4] == ["format", "tool", "policy", "generated"]
    assert document["format"] == 1
    assert document["tool"] == {"name": "regaudit", "version": "0.1.0"}


def test_values_round_trip() -> None:
    document = _document()
    audited, unreadable = document["workbooks"]
    assert audited["path"] == AUDITED_PATH
    assert unreadable == {
        "path": "lab/scanned-copy.xlsx",
        "sha256": "b" * 64,
        "status": "unreadable",
        "error": UNREADABLE_ERROR,
        "failure": "file",
        "stored_values": True,
        "regressions": [],
        "findings": [],
    }
    calib = audited["regressions"][0]
    assert calib["reported"]["p_slope"]["value"] == 0.0213
    assert calib["reported"]["p_slope"]["verdict"] == "mismatch"
    assert calib["verdict"] == "mismatch"
    assert audited["regressions"][1]["reported"]["p_slope"]["value"] == "<0.001"
    assert document["totals"]["findings_by_severity"] == {
        "critical": 1,
        "major": 1,
        "minor": 1,
        "info": 1,
    }
    assert document["totals"]["regressions"] == 2


def test_non_finite_numbers_become_null() -> None:
    text = render_json(sample_result())
    assert "NaN" not in text and "Infinity" not in text
    calib = json.loads(text)["workbooks"][0]["regressions"][0]
    assert calib["findings"][0]["evidence"]["ratio"] is None
    assert calib["design"]["max_leverage"] is None


def test_nested_nan_and_numpy_values_are_made_plain() -> None:
    result = sample_result()
    finding = result.workbooks[0].regressions[0].findings[0]
    finding.evidence = {
        "leverages": [0.1, float("nan"), np.float64(0.5)],
        "levels": np.int64(3),
        "pair": (1, float("-inf")),
    }
    evidence = json.loads(render_json(result))["workbooks"][0]["regressions"][0]["findings"][0][
        "evidence"
    ]
    assert evidence == {"leverages": [0.1, None, 0.5], "levels": 3, "pair": [1, None]}


def test_bytes_are_utf8_indented_with_trailing_newline() -> None:
    result = sample_result()
    result.workbooks[0].path = "lab/Kalibrierung-März.xlsx"
    handle = io.BytesIO()
    JsonReporter().write(result, handle)
    data = handle.getvalue()
    assert "März".encode() in data  # written as UTF-8, not as a \\u escape
    assert data.endswith(b"}\n") and not data.endswith(b"\n\n")
    assert data.startswith(b'{\n  "format": 1,\n')
    assert json.loads(data) == audit_document(result)


def _invalid(validator: jsonschema.Draft202012Validator, document: dict[str, Any]) -> bool:
    return not validator.is_valid(document)


def test_missing_required_fields_do_not_validate(
    validator: jsonschema.Draft202012Validator,
) -> None:
    good = _document()
    for path in (
        ("totals",),
        ("workbooks", 0, "sha256"),
        ("workbooks", 0, "regressions", 0, "found_by"),
        ("workbooks", 0, "regressions", 0, "reported", "slope", "verdict"),
        ("workbooks", 0, "regressions", 0, "findings", 0, "fix"),
        ("totals", "findings_by_severity", "info"),
    ):
        document = copy.deepcopy(good)
        parent: Any = document
        for step in path[:-1]:
            parent = parent[step]
        del parent[path[-1]]
        assert _invalid(validator, document), path


@pytest.mark.parametrize(
    ("where", "value"),
    [
        (("workbooks", 0, "regressions", 0, "findings", 0, "severity"), "fatal"),
        (("workbooks", 0, "regressions", 0, "findings", 0, "cells"), ["E5"]),
        (("workbooks", 0, "regressions", 0, "findings", 0, "cells"), ["Calib!$E$5"]),
        (("workbooks", 0, "regressions", 0, "found_by"), "guesswork"),
        (("workbooks", 0, "regressions", 0, "intended", "slope"), "2.0"),
        (("workbooks", 0, "regressions", 0, "reported", "slope", "verdict"), "ok"),
        (("workbooks", 0, "status"), "skipped"),
        (("workbooks", 1, "error"), None),  # an unreadable workbook must say why
        (("format",), "1"),
    ],
)
def test_bad_values_do_not_validate(
    validator: jsonschema.Draft202012Validator, where: tuple[Any, ...], value: Any
) -> None:
    document = _document()
    parent: Any = document
    for step in where[:-1]:
        parent = parent[step]
    parent[where[-1]] = value
    assert _invalid(validator, document)


def test_added_fields_still_validate(validator: jsonschema.Draft202012Validator) -> None:
    # The contract allows new fields; the schema must not reject them.
    document = _document()
    document["workbooks"][0]["regressions"][0]["findings"][0]["new_field"] = 1
    document["extra"] = {"anything": True}
    assert validator.is_valid(document)
