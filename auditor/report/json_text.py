"""The text of audit.json, the same as ``json.dumps(document, indent=2, ensure_ascii=False,
allow_nan=False)`` gives, in a third of the time.

With ``indent`` the standard library falls back from its C encoder to a pure-Python generator
that yields every comma and bracket as a string of its own; here each container is one ``join``
over its items, the strings escaped by json's own (C) ``encode_basestring`` and the numbers
written by ``int.__repr__`` and ``float.__repr__`` as json writes them. A document this writer
does not know how to write (a key that is not a string, a value of another type, a non-finite
number) goes to ``json.dumps`` itself, which writes it or raises as it always did.
"""

from __future__ import annotations

import json
import math
from json.encoder import encode_basestring  # C when available
from typing import Any

from auditor.report.common import finite_or_none, plain

_INDENT = "  "


class _NotPlain(Exception):
    """The document holds something only ``json.dumps`` decides about."""


def _text(value: Any, newline: str) -> str:
    if isinstance(value, str):
        text: str = encode_basestring(value)
        return text
    if value is None:
        return "null"
    if value is True:
        return "true"
    if value is False:
        return "false"
    if isinstance(value, int):
        return int.__repr__(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise _NotPlain
        return float.__repr__(value)
    if isinstance(value, (list, tuple)):
        if not value:
            return "[]"
        inner = newline + _INDENT
        return (
            "[" + inner + ("," + inner).join([_text(item, inner) for item in value]) + newline + "]"
        )
    if isinstance(value, dict):
        if not value:
            return "{}"
        inner = newline + _INDENT
        items = []
        for key, item in value.items():
            if not isinstance(key, str):
                raise _NotPlain
            items.append(encode_basestring(key) + ": " + _text(item, inner))
        return "{" + inner + ("," + inner).join(items) + newline + "}"
    raise _NotPlain


def indented_json(document: Any) -> str:
    """``document`` as ``json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False)``."""
    try:
        return _text(document, "\n")
    except _NotPlain:
        return json.dumps(document, indent=2, sort_keys=False, allow_nan=False, ensure_ascii=False)


def _plain_text(value: Any, newline: str) -> str:
    """``_text(plain(value), newline)``, the two walks made one. The values of exactly the
    built-in scalar types come first (plain leaves them as they are, but a non-finite number);
    then plain's branches in plain's order, and a scalar it leaves is written by ``_text``."""
    kind = type(value)
    if kind is str:
        text: str = encode_basestring(value)
        return text
    if kind is float:
        return float.__repr__(value) if math.isfinite(value) else "null"
    if kind is int:
        return int.__repr__(value)
    if value is None:
        return "null"
    if kind is bool:
        return "true" if value else "false"
    if isinstance(value, dict):
        if any(type(key) is not str for key in value):
            value = {str(key): item for key, item in value.items()}  # as plain: keys may merge
        if not value:
            return "{}"
        inner = newline + _INDENT
        items = [
            encode_basestring(key) + ": " + _plain_text(item, inner) for key, item in value.items()
        ]
        return "{" + inner + ("," + inner).join(items) + newline + "}"
    if isinstance(value, (list, tuple)):
        if not value:
            return "[]"
        inner = newline + _INDENT
        items = [_plain_text(item, inner) for item in value]
        return "[" + inner + ("," + inner).join(items) + newline + "]"
    if hasattr(value, "tolist") and not isinstance(value, (str, bytes)):
        return _plain_text(value.tolist(), newline)
    return _text(finite_or_none(value), newline)


def plain_indented_json(document: Any) -> str:
    """``indented_json(plain(document))``, in one walk over ``document``."""
    try:
        return _plain_text(document, "\n")
    except _NotPlain:
        return indented_json(plain(document))
