"""The check registry is built explicitly from the family modules, not by import side effects."""

from __future__ import annotations

import types

import pytest

from auditor.checks import FAMILIES, REGISTRY
from auditor.checks.base import Check, build_registry, check
from auditor.model import Finding


def _family(name: str, **members: object) -> types.ModuleType:
    module = types.ModuleType(f"auditor.checks.{name}")
    for key, value in members.items():
        setattr(module, key, value)
    return module


def _finding(context: object) -> list[Finding]:
    return [Finding("x", "info", "m")]


def _made(check_id: str, family: str) -> Check:
    _finding.__module__ = f"auditor.checks.{family}"
    return check(check_id, "A one-line summary.")(_finding)


def test_every_family_contributes_and_ids_are_unique() -> None:
    families = {c.family for c in REGISTRY.values()}
    assert families == {module.__name__.rsplit(".", 1)[-1] for module in FAMILIES}
    assert len(REGISTRY) == len({c.id for c in REGISTRY.values()})


def test_a_check_imported_into_another_family_is_counted_where_it_is_defined() -> None:
    first = _made("alpha-check", "one")
    registry = build_registry([_family("one", a=first), _family("two", borrowed=first)])
    assert list(registry) == ["alpha-check"]
    assert registry["alpha-check"].family == "one"


def test_an_id_defined_twice_is_refused() -> None:
    a, b = _made("same-id", "one"), _made("same-id", "one")
    with pytest.raises(ValueError, match="same-id"):
        build_registry([_family("one", a=a, b=b)])


def test_a_check_is_callable_like_its_function() -> None:
    made = _made("call-check", "one")
    assert made(None) == [Finding("x", "info", "m")]
