"""The ledger's JSON of a result: rebuilt to the same result, in the compact form written now and
in the one-object-per-point form that earlier versions stored."""

from __future__ import annotations

import dataclasses
import json

import pytest
from test_report_xlsx_support import fixture_audit

from auditor.model import WorkbookResult
from auditor.pipeline import resultjson
from auditor.pipeline.columns import unpack_rows


def _document(result: WorkbookResult) -> str:
    return json.dumps(result.to_dict(), default=str, sort_keys=True)


def _workbooks() -> list[WorkbookResult]:
    return [w for w in fixture_audit().workbooks if w.regressions]


@pytest.mark.parametrize("index", range(len(_workbooks())))
def test_every_fixture_result_comes_back_the_same(index: int) -> None:
    result = _workbooks()[index]
    rebuilt = resultjson.loads(resultjson.dumps(result))
    assert _document(rebuilt) == _document(result)
    assert [len(r.data) for r in rebuilt.regressions] == [len(r.data) for r in result.regressions]
    assert rebuilt.regressions[0].data == result.regressions[0].data


def test_data_points_are_stored_as_a_table_once_named() -> None:
    result = max(_workbooks(), key=lambda w: sum(len(r.data) for r in w.regressions))
    stored = json.loads(resultjson.dumps(result))
    points = stored["regressions"][0]["data"]
    assert points["fields"][:3] == ["row", "x", "y"]
    assert points["count"] == len(points["columns"][0]) == len(result.regressions[0].data) > 1
    old_form = json.dumps(dataclasses.asdict(result), separators=(",", ":"), default=str)
    assert len(resultjson.dumps(result)) < len(old_form)


def test_the_earlier_form_still_loads() -> None:
    result = _workbooks()[0]
    old_form = json.dumps(dataclasses.asdict(result), separators=(",", ":"), default=str)
    assert _document(resultjson.loads(old_form)) == _document(result)


@dataclasses.dataclass(slots=True)
class _Inner:
    value: float


@dataclasses.dataclass(slots=True)
class _Nested:
    name: str
    inner: _Inner


def test_a_table_of_scalar_fields_comes_back_as_its_rows_one_by_one() -> None:
    result = max(_workbooks(), key=lambda w: sum(len(r.data) for r in w.regressions))
    points = result.regressions[0].data
    stored = json.loads(resultjson.dumps(result))["regressions"][0]["data"]
    names = [field.name for field in dataclasses.fields(points[0])]
    assert unpack_rows(stored) == [[getattr(point, name) for name in names] for point in points]


def test_the_rows_form_of_the_previous_version_still_loads() -> None:
    result = max(_workbooks(), key=lambda w: sum(len(r.data) for r in w.regressions))
    stored = json.loads(resultjson.dumps(result))
    for regression in stored["regressions"]:
        table = regression["data"]
        if isinstance(table, dict) and "columns" in table:
            regression["data"] = {"fields": table["fields"], "rows": unpack_rows(table)}
    assert _document(resultjson.loads(json.dumps(stored))) == _document(result)


def test_a_table_whose_rows_hold_records_is_converted_row_by_row() -> None:
    table = resultjson._table(_Nested, [_Nested("a", _Inner(1.5)), _Nested("b", _Inner(2.5))])
    assert table == {
        "fields": ["name", "inner"],
        "rows": [["a", {"value": 1.5}], ["b", {"value": 2.5}]],
    }
