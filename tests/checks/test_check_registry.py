"""The check registry is built explicitly from the family modules, not by import side effects."""

from __future__ import annotations

import ast
import inspect
import types

import pytest

from auditor.checks import FAMILIES, REGISTRY
from auditor.checks.base import Check, build_registry, check
from auditor.model import Finding
from auditor.policy import KNOWN


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


def _policy_keys_read(source: str) -> set[str]:
    """Policy keys a module's source reads: ``policy.get("k")``, ``policy.find("k")``,
    ``policy.alpha``."""
    tree = ast.parse(source)
    keys: set[str] = set()
    for node in ast.walk(tree):
        if (
            isinstance(node, ast.Call)
            and isinstance(node.func, ast.Attribute)
            and node.func.attr in ("get", "find")
            and isinstance(node.func.value, ast.Attribute | ast.Name)
            and getattr(node.func.value, "attr", getattr(node.func.value, "id", "")) == "policy"
            and node.args
            and isinstance(node.args[0], ast.Constant)
        ):
            keys.add(str(node.args[0].value))
        if isinstance(node, ast.Attribute) and node.attr == "alpha":
            base = node.value
            if getattr(base, "attr", getattr(base, "id", "")) == "policy":
                keys.add("alpha")
    return keys


def test_declared_thresholds_are_policy_keys_and_cover_them() -> None:
    declared = {key for c in REGISTRY.values() for key in c.thresholds}
    assert declared <= set(KNOWN)
    assert set(KNOWN) <= declared  # every threshold a policy may set is read by some check


@pytest.mark.parametrize("module", FAMILIES, ids=lambda m: m.__name__.rsplit(".", 1)[-1])
def test_a_family_declares_the_thresholds_its_source_reads(module: types.ModuleType) -> None:
    family = module.__name__.rsplit(".", 1)[-1]
    declared = {key for c in REGISTRY.values() if c.family == family for key in c.thresholds}
    read = _policy_keys_read(inspect.getsource(module))
    assert read <= declared


def test_the_scanner_sees_policy_reads() -> None:
    source = 'a = context.policy.get("power")\nb = policy.find("max_leverage")\nc = policy.alpha\n'
    assert _policy_keys_read(source) == {"power", "max_leverage", "alpha"}
