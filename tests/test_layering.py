"""The data flow is one-directional (style practice 4), checked by walking the package tree.

- the core (every stage from reading to checks, and the pipeline) never imports ``cli``,
  ``report`` or ``review``;
- reporters read only the result model (and their own package, errors and the output helper);
- no module takes part in an import cycle.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "auditor"
OUTER = ("cli", "report", "review", "__main__")  # the layers around the core
REPORT_ALLOWED = (
    "auditor.model",
    "auditor.errors",
    "auditor.grid",
    "auditor.processes",
    "auditor.report",
    "auditor",
)


def module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def all_modules() -> dict[str, Path]:
    return {module_name(path): path for path in sorted(PACKAGE.rglob("*.py"))}


def imported_modules(path: Path, modules: dict[str, Path]) -> set[str]:
    """Every auditor module a file imports, anywhere in it (lazy imports included)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            found.add(node.module)
            # ``from auditor.read import workbook`` imports the module auditor.read.workbook
            found.update(
                f"{node.module}.{alias.name}"
                for alias in node.names
                if f"{node.module}.{alias.name}" in modules
            )
    return {name for name in found if name in modules}


def stage(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


def test_the_walk_sees_every_stage() -> None:
    stages = {stage(name) for name in all_modules()}
    assert {"read", "formula", "locate", "fit", "design", "checks", "report", "cli"} <= stages


def test_core_never_imports_cli_report_or_review() -> None:
    modules = all_modules()
    offenders = [
        f"{name} imports {target}"
        for name, path in modules.items()
        if stage(name) not in OUTER
        for target in imported_modules(path, modules)
        if stage(target) in OUTER
    ]
    assert offenders == []


def test_reporters_read_only_the_result_model() -> None:
    modules = all_modules()
    offenders = [
        f"{name} imports {target}"
        for name, path in modules.items()
        if stage(name) == "report"
        for target in imported_modules(path, modules)
        if not (target in REPORT_ALLOWED or target.startswith("auditor.report."))
    ]
    assert offenders == []


def find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    """One import cycle of the graph, or None (depth-first search with colours)."""
    state: dict[str, int] = {}
    trail: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        trail.append(node)
        for target in sorted(graph.get(node, ())):
            if state.get(target) == 1:
                return trail[trail.index(target) :] + [target]
            if target not in state and (cycle := visit(target)) is not None:
                return cycle
        trail.pop()
        state[node] = 2
        return None

    for node in sorted(graph):
        if node not in state and (cycle := visit(node)) is not None:
            return cycle
    return None


def package_graph() -> dict[str, set[str]]:
    modules = all_modules()
    graph: dict[str, set[str]] = {}
    for name, path in modules.items():
        # a module importing its own package's __init__ (for a re-export) is not a cycle of code
        graph[name] = {
            t for t in imported_modules(path, modules) if t != name and not name.startswith(t + ".")
        }
    return graph


def test_no_import_cycle() -> None:
    assert find_cycle(package_graph()) is None


@pytest.mark.parametrize(
    ("graph", "expected"),
    [
        ({"a": {"b"}, "b": {"c"}, "c": {"a"}}, ["a", "b", "c", "a"]),
        ({"a": {"b"}, "b": {"c"}, "c": set()}, None),
        ({"a": {"a"}}, ["a", "a"]),
    ],
)
def test_the_cycle_finder_finds_cycles(
    graph: dict[str, set[str]], expected: list[str] | None
) -> None:
    assert find_cycle(graph) == expected


MAX_MODULE_LINES = 300  # small modules (DEVELOPERS.md): split a module before it grows past this


def test_no_module_is_longer_than_the_limit() -> None:
    long = {
        str(path.relative_to(PACKAGE)): n
        for path in PACKAGE.rglob("*.py")
        if (n := len(path.read_text(encoding="utf-8").splitlines())) > MAX_MODULE_LINES
    }
    assert not long, f"modules over {MAX_MODULE_LINES} lines: {long}"
