"""The data flow is one-directional: the core never imports the CLI or the reporters, and the
reporters never import the reading or fitting modules (style practice 4)."""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "auditor"
CORE = [
    "workbook.py",
    "formula.py",
    "evaluate.py",
    "locate.py",
    "roles.py",
    "extract.py",
    "fit.py",
    "compare.py",
    "reported.py",
    "policy.py",
    "audit.py",
    "model.py",
    "errors.py",
]
REPORT_FORBIDDEN = (
    "auditor.workbook",
    "auditor.locate",
    "auditor.fit",
    "auditor.extract",
    "auditor.evaluate",
    "auditor.formula",
    "auditor.audit",
)


def imported_modules(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            found.add(node.module)
    return found


def test_core_never_imports_cli_or_reporters() -> None:
    offenders = []
    files = [PACKAGE / name for name in CORE] + sorted((PACKAGE / "checks").glob("*.py"))
    for path in files:
        for module in imported_modules(path):
            if module in ("auditor.cli", "auditor.report") or module.startswith("auditor.report."):
                offenders.append(f"{path.name} imports {module}")
    assert offenders == []


def test_reporters_read_only_the_result_model() -> None:
    offenders = []
    for path in sorted((PACKAGE / "report").glob("*.py")):
        for module in imported_modules(path):
            if module.startswith(REPORT_FORBIDDEN):
                offenders.append(f"{path.name} imports {module}")
    assert offenders == []
