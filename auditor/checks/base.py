"""The check record, its registry and the context a regression check receives."""

from __future__ import annotations

import inspect
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from auditor.context import RegressionContext
from auditor.model import CheckInfo, Finding

CheckFunction = Callable[[RegressionContext], list[Finding]]


@dataclass(frozen=True)
class Check:
    id: str
    summary: str
    family: str
    function: Callable[..., list[Finding]]
    scope: str = "regression"  # "regression" or "workbook"
    options: dict[str, Any] = field(default_factory=dict)

    @property
    def doc(self) -> str:
        return inspect.getdoc(self.function) or ""


REGISTRY: dict[str, Check] = {}


def catalogue() -> list[CheckInfo]:
    """Every registered check as the result model describes it (for reporters)."""
    return [
        CheckInfo(item.id, item.summary, item.doc, item.family, item.scope)
        for item in REGISTRY.values()
    ]


def check(
    check_id: str, summary: str, *, scope: str = "regression", options: dict[str, Any] | None = None
) -> Callable[[Callable[..., list[Finding]]], Callable[..., list[Finding]]]:
    """Register a check function under a stable id."""

    def register(function: Callable[..., list[Finding]]) -> Callable[..., list[Finding]]:
        if check_id in REGISTRY:
            raise ValueError(f"check id {check_id!r} is registered twice")
        family = function.__module__.rsplit(".", 1)[-1]
        REGISTRY[check_id] = Check(check_id, summary, family, function, scope, options or {})
        return function

    return register


def run_regression_checks(context: RegressionContext) -> list[Finding]:
    findings: list[Finding] = []
    for registered in REGISTRY.values():
        if registered.scope == "regression":
            findings.extend(registered.function(context))
    return findings
