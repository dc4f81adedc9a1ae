"""The result model as JSON and back, for the ledger: ``dataclasses.asdict`` one way, and a
rebuild guided by the dataclasses' own type hints the other, so that fields added to the model
later need no change here (a stored result simply lacks them and they take their defaults)."""

from __future__ import annotations

import dataclasses
import functools
import json
import types
import typing
from typing import Any

from auditor.model import WorkbookResult


def dumps(result: WorkbookResult) -> str:
    return json.dumps(dataclasses.asdict(result), separators=(",", ":"), default=_json_default)


def loads(text: str) -> WorkbookResult:
    """Raises TypeError, ValueError or KeyError when ``text`` does not fit the model."""
    rebuilt: WorkbookResult = _build(WorkbookResult, json.loads(text))
    return rebuilt


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
    if origin is list and isinstance(value, list):
        (item_hint,) = typing.get_args(hint) or (Any,)
        return [_convert(item_hint, item) for item in value]
    if origin is dict and isinstance(value, dict):
        _key_hint, item_hint = typing.get_args(hint) or (Any, Any)
        return {k: _convert(item_hint, v) for k, v in value.items()}
    return value
