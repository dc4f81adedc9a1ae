"""The check record, its registry and the context a regression check receives."""

from __future__ import annotations

import inspect
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from types import ModuleType
from typing import Any

from auditor.context import RegressionContext, WorkbookContext
from auditor.model import CheckInfo, Finding

CheckFunction = Callable[[RegressionContext], list[Finding]]


@dataclass(frozen=True)
class Check:
    """One check: a stable id, a one-line summary, its family (module) and its function.

    Calling a Check calls its function, so a module can still call its own checks by name."""

    id: str
    summary: str
    family: str
    function: Callable[..., list[Finding]]
    scope: str = "regression"  # "regression" or "workbook"
    thresholds: tuple[str, ...] = ()  # the policy keys it reads (regaudit rules lists them)

    @property
    def doc(self) -> str:
        return inspect.getdoc(self.function) or ""

    def __call__(self, context: Any) -> list[Finding]:
        return self.function(context)


def check(
    check_id: str,
    summary: str,
    *,
    scope: str = "regression",
    thresholds: tuple[str, ...] = (),
) -> Callable[[Callable[..., list[Finding]]], Check]:
    """Make a function a check with a stable id; :func:`build_registry` collects it."""

    def make(function: Callable[..., list[Finding]]) -> Check:
        family = function.__module__.rsplit(".", 1)[-1]
        return Check(check_id, summary, family, function, scope, thresholds)

    return make


def build_registry(families: Iterable[ModuleType]) -> dict[str, Check]:
    """Every check defined in ``families``, in their order and then in definition order.

    A check imported into another module is counted once, where it is defined; an id used twice
    is an error."""
    registry: dict[str, Check] = {}
    for module in families:
        family = module.__name__.rsplit(".", 1)[-1]
        for value in vars(module).values():
            if not isinstance(value, Check) or value.family != family:
                continue
            if value.id in registry:
                raise ValueError(f"check id {value.id!r} is defined twice")
            registry[value.id] = value
    return registry


def catalogue_of(registry: dict[str, Check]) -> list[CheckInfo]:
    """Every check of ``registry`` as the result model describes it (for reporters)."""
    return [
        CheckInfo(item.id, item.summary, item.doc, item.family, item.scope)
        for item in registry.values()
    ]


def run_checks(
    registry: dict[str, Check], scope: str, context: RegressionContext | WorkbookContext
) -> list[Finding]:
    from auditor.checks.guard import failed_check  # noqa: PLC0415 (guard imports the model)

    findings: list[Finding] = []
    for registered in registry.values():
        if registered.scope != scope:
            continue
        try:
            found = registered.function(context)
        except Exception as exc:  # noqa: BLE001 - one check's failure never costs the others
            found = failed_check(registered.id, exc, _cells(context))
        findings.extend(found)
    return findings


def _cells(context: RegressionContext | WorkbookContext) -> list[str]:
    """Where a failed check's note is shown: the regression's first reported cell (its y range
    when it reports none); nowhere in particular for a workbook check."""
    if isinstance(context, RegressionContext):
        return [value.cell for value in context.reported.values()] or [context.spec.y.address]
    return []
