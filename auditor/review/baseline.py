"""Baselines: record today's findings, then report only the new ones.

``regaudit baseline create PATH... --out FILE`` writes every finding's identity (see
:mod:`auditor.review.identity`) into a JSON file the team commits. ``regaudit audit ... --baseline
FILE``
then drops the findings recorded there and lists the recorded ones that no longer occur.

A recorded finding counts as *fixed* only when its workbook was audited in this run: an entry
of a workbook left out of the run, or unreadable this time, is *unchecked*, not fixed.

The file (``format`` 1) holds, besides the identity, what a reviewer needs to read a diff of it
in a pull request: workbook, check, severity, cells and message. Only the identity is matched.
"""

from __future__ import annotations

import dataclasses
import json
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from auditor.errors import UsageError
from auditor.model import AuditResult, RegressionResult, WorkbookResult
from auditor.report.output import atomic_output
from auditor.review.identity import assign_identities, audit_root, relative_workbook_path

BASELINE_FORMAT = 1
_ENTRY_KEYS = ("identity", "workbook", "check", "severity", "cells", "message")


@dataclass(frozen=True)
class BaselineEntry:
    identity: str
    workbook: str  # relative to the audited root, as in the identity
    check: str
    severity: str
    cells: tuple[str, ...] = ()
    message: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {
            "identity": self.identity,
            "workbook": self.workbook,
            "check": self.check,
            "severity": self.severity,
            "cells": list(self.cells),
            "message": self.message,
        }


@dataclass
class Baseline:
    entries: list[BaselineEntry]
    version: str = ""
    policy: str = ""
    created: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {
            "format": BASELINE_FORMAT,
            "tool": {"name": "regaudit", "version": self.version},
            "policy": self.policy,
            "created": self.created,
            "entries": [entry.to_dict() for entry in self.entries],
        }


@dataclass
class BaselineOutcome:
    """An audit seen through a baseline."""

    result: AuditResult  # a copy holding only the findings not in the baseline
    known: int = 0  # findings left out because the baseline has them
    fixed: list[BaselineEntry] = field(default_factory=list)  # recorded, audited, gone
    unchecked: list[BaselineEntry] = field(default_factory=list)  # workbook not audited now


def create_baseline(result: AuditResult, root: Path | None = None) -> Baseline:
    """Every finding of ``result``, in report order (identities assigned where missing)."""
    base = root if root is not None else audit_root(result.inputs or ["."])
    if any(not finding.identity for finding in result.all_findings()):
        assign_identities(result, base)
    entries = [
        BaselineEntry(
            identity=finding.identity,
            workbook=relative_workbook_path(workbook.path, base),
            check=finding.check,
            severity=finding.severity,
            cells=tuple(finding.cells),
            message=finding.message,
        )
        for workbook in result.workbooks
        for finding in workbook.all_findings()
    ]
    return Baseline(entries, result.version, result.policy, result.generated)


def render_baseline(baseline: Baseline) -> str:
    return json.dumps(baseline.to_dict(), indent=2, ensure_ascii=False) + "\n"


def save_baseline(baseline: Baseline, path: Path, inputs: Iterable[Path | str] = ()) -> Path:
    """Write the baseline atomically (never over one of ``inputs``, the audited files)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    with atomic_output(path, inputs) as handle:
        handle.write(render_baseline(baseline).encode("utf-8"))
    return path


def _entry(raw: Any, origin: str) -> BaselineEntry:
    if not isinstance(raw, dict) or not isinstance(raw.get("identity"), str):
        raise UsageError(f"{origin} has no 'identity'; recreate it with 'regaudit baseline create'")
    return BaselineEntry(
        identity=raw["identity"],
        workbook=str(raw.get("workbook", "")),
        check=str(raw.get("check", "")),
        severity=str(raw.get("severity", "")),
        cells=tuple(str(cell) for cell in raw.get("cells", [])),
        message=str(raw.get("message", "")),
    )


def parse_baseline(text: str, origin: str) -> Baseline:
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise UsageError(
            f"baseline {origin!r} is not JSON ({exc}); "
            "write it with 'regaudit baseline create PATH... --out FILE'"
        ) from exc
    if not isinstance(data, dict) or data.get("format") != BASELINE_FORMAT:
        found = data.get("format") if isinstance(data, dict) else None
        raise UsageError(
            f"baseline {origin!r} has format {found!r}, not {BASELINE_FORMAT}; "
            "recreate it with 'regaudit baseline create'"
        )
    entries = data.get("entries")
    if not isinstance(entries, list):
        raise UsageError(f"baseline {origin!r} has no list of 'entries'")
    tool = data.get("tool")
    tool = tool if isinstance(tool, dict) else {}
    return Baseline(
        [_entry(raw, f"baseline {origin!r}: entry {n}") for n, raw in enumerate(entries, 1)],
        version=str(tool.get("version", "")),
        policy=str(data.get("policy", "")),
        created=str(data.get("created", "")),
    )


def load_baseline(path: Path) -> Baseline:
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError as exc:
        raise UsageError(
            f"baseline {str(path)!r} does not exist; create it with "
            "'regaudit baseline create PATH... --out FILE'"
        ) from exc
    except (OSError, UnicodeDecodeError) as exc:
        raise UsageError(f"baseline {str(path)!r} cannot be read: {exc}") from exc
    return parse_baseline(text, str(path))


def _without(regression: RegressionResult, known: set[str]) -> RegressionResult:
    kept = [f for f in regression.findings if f.identity not in known]
    return dataclasses.replace(regression, findings=kept)


def apply_baseline(
    result: AuditResult, baseline: Baseline, root: Path | None = None
) -> BaselineOutcome:
    """A copy of ``result`` without the baseline's findings; ``result`` itself is not changed."""
    base = root if root is not None else audit_root(result.inputs or ["."])
    if any(not finding.identity for finding in result.all_findings()):
        assign_identities(result, base)
    recorded = {entry.identity for entry in baseline.entries}
    present = {finding.identity for finding in result.all_findings()}
    workbooks: list[WorkbookResult] = []
    for workbook in result.workbooks:
        findings = [f for f in workbook.findings if f.identity not in recorded]
        regressions = [_without(r, recorded) for r in workbook.regressions]
        workbooks.append(dataclasses.replace(workbook, findings=findings, regressions=regressions))
    audited = {
        relative_workbook_path(w.path, base) for w in result.workbooks if w.status != "unreadable"
    }
    gone = [entry for entry in baseline.entries if entry.identity not in present]
    return BaselineOutcome(
        result=dataclasses.replace(result, workbooks=workbooks),
        known=len(present & recorded),
        fixed=[entry for entry in gone if entry.workbook in audited],
        unchecked=[entry for entry in gone if entry.workbook not in audited],
    )


def describe_outcome(outcome: BaselineOutcome, limit: int = 20) -> list[str]:
    """Lines for the terminal: how many findings the baseline hid, which ones are gone.

    At most ``limit`` entries are listed one by one; a large share lists the rest as a count.
    """
    lines = [
        f"baseline: {outcome.known} known finding(s) left out, "
        f"{len(outcome.fixed)} no longer occur, {len(outcome.unchecked)} not checked this run"
    ]
    listed = [
        f"  fixed: {e.workbook} {', '.join(e.cells) or '(workbook)'} {e.check} [{e.identity}]"
        for e in outcome.fixed
    ]
    listed += [
        f"  not checked (workbook not audited): {e.workbook} [{e.identity}]"
        for e in outcome.unchecked
    ]
    if len(listed) > limit:
        listed = [*listed[:limit], f"  … and {len(listed) - limit} more"]
    return lines + listed
