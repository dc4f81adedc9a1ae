"""The result model as JSON and back, for the ledger: the dataclasses' fields one way (a table
of rows for a list of data points), and a rebuild guided by the dataclasses' own type hints the
other (which also reads the one-object-per-point form that earlier versions stored), so that
fields added to the model later need no change here (a stored result simply lacks them and they
take their defaults)."""

from __future__ import annotations

import dataclasses
import functools
import json
import types
import typing
from typing import Any

from auditor.model import WorkbookResult
from auditor.pipeline.columns import pack_records, unpack_rows

# Set in a record whose regressions without a finding were stored without their data points.
POINTS_LEFT_OUT = "points_left_out"


def dumps(result: WorkbookResult, points: str = "all") -> str:
    """Compact JSON: dataclasses as objects, except lists of one dataclass (the data points, one
    per row of a table) which become ``{"fields": [names], "rows": [[values], …]}``, so a name is
    stored once per table rather than once per row, or, when every field holds scalars, packed
    columns (:mod:`auditor.pipeline.columns`). Values are taken as they are, not copied:
    ``dataclasses.asdict`` deep-copies every one, several times the cost of the encoding.

    ``points="findings"`` keeps the data points of the regressions with a finding only (those a
    detail sheet shows; nearly all of a record's size is points) and marks the record so
    (:data:`POINTS_LEFT_OUT`, read back by :func:`loads_record`)."""
    plain = _plain(result) if points == "all" else _without_clean_points(result)
    return json.dumps(plain, separators=(",", ":"), default=_json_default)


def _without_clean_points(result: WorkbookResult) -> dict[str, Any]:
    plain: dict[str, Any] = _plain(result, skip="regressions")
    plain["regressions"] = [
        _plain(regression, skip="" if regression.findings else "data")
        for regression in result.regressions
    ]
    plain[POINTS_LEFT_OUT] = True
    return plain


_SCALARS = (str, int, float, bool, type(None))


@functools.cache
def _field_names(cls: type) -> tuple[str, ...]:
    return tuple(item.name for item in dataclasses.fields(cls))


def _plain(value: Any, skip: str = "") -> Any:
    """``value`` as json encodes it; a dataclass's field named ``skip`` as empty."""
    if isinstance(value, _SCALARS):
        return value
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        names = _field_names(type(value))
        return {name: [] if name == skip else _field(getattr(value, name)) for name in names}
    if isinstance(value, (list, tuple)):
        return [_plain(item) for item in value]
    if isinstance(value, dict):
        return {key: _plain(item) for key, item in value.items()}
    return value  # numpy scalars and the like: json's default turns them into numbers


def _field(value: Any) -> Any:
    """A dataclass field's value; a list of a slotted dataclass (the model's records made by
    the thousand, such as DataPoint) as a table, rebuilt by the field's type hint."""
    if isinstance(value, list) and len(value) > 1 and dataclasses.is_dataclass(value[0]):
        kind = type(value[0])
        if hasattr(kind, "__slots__") and all(type(item) is kind for item in value):
            return _table(kind, value)
    return _plain(value)


def _table(kind: type, items: Any) -> dict[str, Any]:
    names = _field_names(kind)
    if _flat(kind):
        # Every field a scalar or a list of scalars: packed column by column (columns.py; a
        # 200,000-row table: 2 s of Python → a few hundredths).
        return pack_records(names, items)
    rows = []
    for item in items:
        row = [getattr(item, name) for name in names]
        rows.append([v if isinstance(v, _SCALARS) else _plain(v) for v in row])
    return {"fields": list(names), "rows": rows}


def _flat_hint(hint: Any, inside_list: bool = False) -> bool:
    """A scalar type, a union of them, or (at the top) a list of those."""
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        return all(_flat_hint(option, inside_list) for option in typing.get_args(hint))
    if origin is list and not inside_list:
        return all(_flat_hint(option, True) for option in typing.get_args(hint))
    return hint in _SCALARS


def _flat_record(hint: Any) -> bool:
    return isinstance(hint, type) and dataclasses.is_dataclass(hint) and _flat(hint)


@functools.cache
def _flat(kind: type) -> bool:
    """Whether every field of ``kind`` holds a scalar or a list of scalars (by its type hints),
    so that its values need no conversion before json encodes them."""
    if len(_field_names(kind)) < 2:
        return False  # attrgetter of one name gives the value, not a row
    try:
        hints = _hints(kind)
    except (NameError, TypeError):
        return False
    return all(_flat_hint(hints[name]) for name in _field_names(kind))


def loads(text: str) -> WorkbookResult:
    """Raises TypeError, ValueError or KeyError when ``text`` does not fit the model."""
    return loads_record(text)[0]


def loads_record(text: str) -> tuple[WorkbookResult, bool]:
    """The result and whether it holds every data point (False: stored by ``dumps(result,
    "findings")``, the points of regressions without a finding left out). Raises as ``loads``."""
    data = json.loads(text)
    rebuilt: WorkbookResult = _build(WorkbookResult, data)
    return rebuilt, not data.get(POINTS_LEFT_OUT, False)


def _json_default(value: Any) -> Any:
    """numpy scalars (in evidence dicts) as Python numbers; anything else as its text."""
    item = getattr(value, "item", None)
    return item() if callable(item) else str(value)


@functools.cache
def _hints(cls: Any) -> dict[str, Any]:
    return typing.get_type_hints(cls)


def _build(cls: Any, data: Any) -> Any:
    """``cls`` (a dataclass of the result model) from what ``dataclasses.asdict`` gave; fields
    added since are left at their defaults, fields since removed are ignored."""
    hints = _hints(cls)
    values = {}
    for item in dataclasses.fields(cls):
        if item.name in data:
            values[item.name] = _convert(hints[item.name], data[item.name])
    return cls(**values)


def _convert(hint: Any, value: Any) -> Any:
    if value is None:
        return None
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        for option in typing.get_args(hint):
            if dataclasses.is_dataclass(option) and isinstance(value, dict):
                return _build(option, value)
        return value
    if dataclasses.is_dataclass(hint) and isinstance(value, dict):
        return _build(hint, value)
    if origin is list and isinstance(value, dict) and "fields" in value:
        (item_hint,) = typing.get_args(hint) or (Any,)
        names = value["fields"]
        rows = unpack_rows(value) if "columns" in value else value["rows"]
        if _flat_record(item_hint) and list(names) == list(_field_names(item_hint)):
            return [item_hint(*row) for row in rows]  # scalars and lists: nothing to convert
        return [_convert(item_hint, dict(zip(names, row, strict=True))) for row in rows]
    if origin is list and isinstance(value, list):
        (item_hint,) = typing.get_args(hint) or (Any,)
        return [_convert(item_hint, item) for item in value]
    if origin is dict and isinstance(value, dict):
        _key_hint, item_hint = typing.get_args(hint) or (Any, Any)
        return {k: _convert(item_hint, v) for k, v in value.items()}
    return value
