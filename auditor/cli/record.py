"""The review record of a folder already audited, written from the ledger without auditing again.

A reviewer who waives findings after the audit wants the reports (audit.xlsx, summary.txt,
audit.json) to carry the decisions: per finding open or waived, with reason, name and date, and
the SHA-256 of each input. ``regaudit record PATH...`` looks every file up in the ledger by the
SHA-256 of its present content, under the same policy, bindings and regaudit version; a file
changed since, or never audited so, is named and nothing is written, so the record can only
describe exactly the content it names.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

from auditor import __version__
from auditor.cli.runner import load_bindings, timestamp_text
from auditor.errors import UsageError
from auditor.model import AuditResult, WorkbookResult
from auditor.options import DEFAULT_FORMATS as FORMATS
from auditor.pipeline.inputs import scan_inputs
from auditor.pipeline.ledger import (
    AuditKey,
    Ledger,
    default_ledger_path,
    file_identity,
    settings_digest,
)
from auditor.policy import load_policy
from auditor.report import write_reports
from auditor.report.output import prepare_out_dir, staged_outputs
from auditor.review.identity import assign_identities, audit_root
from auditor.review.waivers import Waiver, apply_waivers, default_waiver_file, load_waivers

MISSING_LISTED = 10


def results_from_ledger(
    paths: list[Path], ledger: Ledger, key: AuditKey, points: str = "all"
) -> tuple[list[WorkbookResult], list[Path]]:
    """The stored result of each file's present content, and the files that have none
    (``points``: the data points the reports show, which a stored result must hold)."""
    found: list[WorkbookResult] = []
    missing: list[Path] = []
    for path in paths:
        identity = file_identity(path)
        stored = ledger.lookup(identity[0], key, points) if identity else None
        if stored is None:
            missing.append(path)
        else:
            found.append(dataclasses.replace(stored, path=str(path)))
    return found, missing


def _html_hint(points: str) -> str:
    if points != "all":
        return ""
    return (
        "; review.html plots every regression, so the audit must have kept every data point: "
        "give that audit the html format too (--format json,text,xlsx,html)"
    )


def write_record(
    inputs: list[str],
    out_dir: Path,
    policy_name: str = "auto",
    formats: tuple[str, ...] = FORMATS,
    bindings_file: str | None = None,
    waivers_file: str | None = None,
    ledger_file: str | None = None,
    timestamp: str | None = None,
) -> tuple[AuditResult, list[Waiver]]:
    """Write the reports of ``inputs`` from the ledger; return the result and unused waivers."""
    policy = load_policy(policy_name)
    bindings = load_bindings(bindings_file)
    absent = [p for p in inputs if not Path(p).exists()]
    if absent:
        raise UsageError(f"no such file or folder: {', '.join(repr(p) for p in absent)}")
    scan = scan_inputs(inputs, out_dir)
    if not scan.workbooks:
        raise UsageError(f"no .xlsx or .xlsm workbooks found in {', '.join(map(repr, inputs))}")
    root = audit_root(inputs)
    waiver_path = Path(waivers_file) if waivers_file else default_waiver_file(root)
    waivers = load_waivers(waiver_path, required=waivers_file is not None)
    ledger_path = Path(ledger_file) if ledger_file else default_ledger_path()
    if not ledger_path.exists():
        raise UsageError(f"no ledger at {str(ledger_path)!r}: run 'regaudit audit' first")
    key = AuditKey(policy.name, settings_digest(policy, bindings), __version__)
    with Ledger(ledger_path) as ledger:
        points = "all" if "html" in formats else "findings"  # review.html plots every one
        workbooks, missing = results_from_ledger(scan.workbooks, ledger, key, points)
    if missing:
        listed = ", ".join(str(p) for p in missing[:MISSING_LISTED])
        more = f" and {len(missing) - MISSING_LISTED} more" if len(missing) > MISSING_LISTED else ""
        raise UsageError(
            f"{len(missing)} file(s) have no audit of their present content under policy "
            f"{policy.name!r} and regaudit {__version__} in {str(ledger_path)!r}: {listed}{more}; "
            "audit them first (regaudit audit --changed audits only those)" + _html_hint(points)
        )
    result = AuditResult(
        version=__version__,
        policy=policy.name,
        workbooks=workbooks,
        generated=timestamp_text(timestamp),
        inputs=[str(p) for p in inputs],
        skipped=scan.skipped,
    )
    assign_identities(result, root)
    unused = apply_waivers(result, waivers)
    prepare_out_dir(out_dir)
    with staged_outputs():
        write_reports(result, out_dir, list(formats), input_paths=scan.workbooks)
    return result, unused
