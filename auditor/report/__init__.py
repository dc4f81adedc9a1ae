"""Reporters: one result model in, one file out per format.

    Reporter (protocol)   filename + write(result, handle)
    ├── JsonReporter      audit.json   (the machine contract)
    ├── TextReporter      summary.txt  (the first thing a reviewer reads)
    ├── XlsxReporter      audit.xlsx   (the reviewer's workbook)
    ├── SarifReporter     audit.sarif  (SARIF 2.1.0 for code-review tools; on request only)
    └── HtmlReporter      review.html  (a page with plots per regression; on request only)

Reporters read only ``auditor.model``; they never open source workbooks nor import the reading,
locating or fitting modules. ``write_reports`` is the one entry point for the CLI: it sends every
file through ``output.atomic_output``, so a failure leaves the previous reports intact.
"""

from __future__ import annotations

import contextlib
import importlib
from collections.abc import Iterable, Sequence
from functools import partial
from pathlib import Path
from typing import Any, BinaryIO, Protocol

from auditor.errors import UsageError
from auditor.model import AuditResult
from auditor.report.common import AnnotatedCopy
from auditor.report.forked import forked_write
from auditor.report.output import ProtectedFiles, atomic_output, one_set, refuse_inputs


class Reporter(Protocol):
    """Turns one AuditResult into the bytes of one file named ``filename``."""

    filename: str

    def write(self, result: AuditResult, handle: BinaryIO) -> None: ...


class _OnFirstUse:
    """A reporter whose module (XlsxWriter, tabulate) is imported when it first writes: a run
    that asks for JSON alone does not pay for the others' imports."""

    def __init__(self, filename: str, module: str, name: str, args: tuple[Any, ...] = ()) -> None:
        self.filename, self.module, self.name, self.args = filename, module, name, args

    def made(self) -> Reporter:
        made: Reporter = getattr(importlib.import_module(self.module), self.name)(*self.args)
        return made

    def write(self, result: AuditResult, handle: BinaryIO) -> None:
        self.made().write(result, handle)


_CLASSES = {
    "XlsxReporter": ("audit.xlsx", "auditor.report.xlsx.workbook"),
    "TextReporter": ("summary.txt", "auditor.report.text"),
    "JsonReporter": ("audit.json", "auditor.report.json"),
    "SarifReporter": ("audit.sarif", "auditor.report.sarif"),
    "HtmlReporter": ("review.html", "auditor.report.html"),
}
REPORTERS: dict[str, Reporter] = {
    fmt: _OnFirstUse(*_CLASSES[name], name)
    for fmt, name in (
        ("xlsx", "XlsxReporter"),
        ("text", "TextReporter"),
        ("json", "JsonReporter"),
        ("sarif", "SarifReporter"),
        ("html", "HtmlReporter"),
    )
}
DEFAULT_FORMATS: tuple[str, ...] = ("xlsx", "text", "json")


def audited_files(result: AuditResult) -> set[Path]:
    """The files a report must never overwrite: every workbook and every input that is a file."""
    files = {Path(workbook.path) for workbook in result.workbooks}
    files |= {Path(source) for source in result.inputs if Path(source).is_file()}
    return files


def write_reports(
    result: AuditResult,
    out_dir: Path,
    formats: Sequence[str] = DEFAULT_FORMATS,
    input_paths: Iterable[Path | str] = (),
    copies: Sequence[AnnotatedCopy] = (),
    detail: str = "findings",
) -> list[Path]:
    """Write one file per format into ``out_dir`` (created if missing); return their paths.

    No report is written onto ``input_paths`` (the files the CLI collected) nor onto any
    workbook or input file named in ``result``.
    Unknown formats raise UsageError before any file is written, and a failing reporter leaves
    none of the set written (``output.one_set``). ``detail`` is "findings" (a
    detail sheet in audit.xlsx for each regression with a finding) or "all" (one each).
    """
    unknown = [name for name in formats if name not in REPORTERS]
    if unknown:
        known = ", ".join(sorted(REPORTERS))
        raise UsageError(f"unknown report format {unknown[0]!r}; choose from {known}")
    inputs = ProtectedFiles(audited_files(result) | {Path(source) for source in input_paths})
    out_dir = Path(out_dir)
    chosen = [  # keeps order, drops repeats; the workbook lists the annotated copies
        _with_copies(REPORTERS[name], copies, detail, out_dir)
        if name == "xlsx"
        else REPORTERS[name]
        for name in dict.fromkeys(formats)
    ]
    # Check every target first, so a refusal does not leave a half-written set of reports.
    for reporter in chosen:
        refuse_inputs(out_dir / reporter.filename, inputs)
    out_dir.mkdir(parents=True, exist_ok=True)
    with one_set(), contextlib.ExitStack() as stack:  # all of them or none
        aside = _written_aside(chosen)
        if aside is not None:  # the workbook, by a forked child while the others are written
            handle = stack.enter_context(atomic_output(out_dir / aside.filename, inputs))
            stack.enter_context(forked_write(partial(aside.write, result), handle))
        for reporter in chosen:
            if reporter is not aside:
                with atomic_output(out_dir / reporter.filename, inputs) as handle:
                    reporter.write(result, handle)
    return [out_dir / reporter.filename for reporter in chosen]


def _written_aside(chosen: Sequence[Reporter]) -> Reporter | None:
    """audit.xlsx, the slowest report, when others are written too (see report.forked)."""
    workbooks = [reporter for reporter in chosen if reporter.filename == "audit.xlsx"]
    return workbooks[0] if workbooks and len(chosen) > 1 else None


def prepare_reporters(formats: Sequence[str] = DEFAULT_FORMATS) -> None:
    """Import the modules of the reporters of ``formats`` now. A run calls this while its
    workers audit, so that after the last workbook only the writing is left."""
    for name in formats:
        reporter = REPORTERS.get(name)
        if isinstance(reporter, _OnFirstUse):
            importlib.import_module(reporter.module)


def _with_copies(
    reporter: Reporter, copies: Sequence[AnnotatedCopy], detail: str, folder: Path
) -> Reporter:
    """The workbook reporter made for this run: the copies it lists, the detail sheets it has,
    the folder its source links are relative to (its module still imported when it writes,
    which may be in the forked child: see report.forked)."""
    if not isinstance(reporter, _OnFirstUse):
        return reporter
    args = (copies, detail, folder)
    return _OnFirstUse(reporter.filename, reporter.module, reporter.name, args)


def __getattr__(name: str) -> Any:
    """The reporter classes stay importable from here, their modules loaded when asked for."""
    if name in _CLASSES:
        return getattr(importlib.import_module(_CLASSES[name][1]), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


__all__ = [
    "DEFAULT_FORMATS",
    "REPORTERS",
    "JsonReporter",
    "Reporter",
    "SarifReporter",
    "HtmlReporter",
    "TextReporter",
    "XlsxReporter",
    "audited_files",
    "prepare_reporters",
    "write_reports",
]
