"""Which files of the given paths are audited, and which are passed over and why.

A folder is searched recursively for .xlsx/.xlsm workbooks. Spreadsheet files of other formats
found beside them (.xls, .csv, .ods, ...) are not audited, but they are listed with the reason and
what to do, so a reviewer never believes a folder was covered when part of it was not. regaudit's
own outputs (reports and annotated copies) are never audited, wherever ``--out`` points.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

from auditor.model import SkippedFile

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")
REPORT_NAMES = ("audit.xlsx",)  # the reviewer's workbook regaudit writes into --out
REPORT_MARK = b'"name": "regaudit"'  # how audit.json names its author (report/json.py)

_SAVE_AS = "open it in a spreadsheet application, save a copy as .xlsx and audit the copy"
# Spreadsheet formats a reviewer may find beside the workbooks: why each is passed over.
OTHER_FORMATS: dict[str, str] = {
    ".xls": f"a legacy Excel 97-2003 workbook; {_SAVE_AS}",
    ".xlsb": f"a binary Excel workbook; {_SAVE_AS}",
    ".xlt": f"a legacy Excel template; {_SAVE_AS}",
    ".xltx": f"an Excel template; {_SAVE_AS}",
    ".xltm": f"an Excel template with macros; {_SAVE_AS}",
    ".ods": f"an OpenDocument spreadsheet; {_SAVE_AS}",
    ".fods": f"a flat OpenDocument spreadsheet; {_SAVE_AS}",
    ".numbers": "an Apple Numbers document; export it as .xlsx and audit the export",
    ".csv": "plain text values without formulas, so there is no reported regression to check; "
    "if the regression was built on it, audit the workbook that holds the formulas",
    ".tsv": "plain text values without formulas, so there is no reported regression to check; "
    "if the regression was built on it, audit the workbook that holds the formulas",
}


@dataclass
class InputScan:
    workbooks: list[Path] = field(default_factory=list)
    skipped: list[SkippedFile] = field(default_factory=list)


def _is_report_folder(folder: Path) -> bool:
    """A folder regaudit wrote reports into: its audit.json names regaudit as the tool."""
    try:
        with open(folder / "audit.json", "rb") as handle:
            return REPORT_MARK in handle.read(512)
    except OSError:
        return False


def is_own_output(path: Path, out_dir: Path | None = None) -> bool:
    """An annotated copy (NAME.audited.xlsx), or the audit.xlsx of a report folder."""
    if ".audited." in path.name:
        return True
    if path.name.lower() not in REPORT_NAMES:
        return False
    folder = path.parent.resolve()
    return (out_dir is not None and folder == out_dir.resolve()) or _is_report_folder(folder)


def _wanted(path: Path) -> bool:
    return path.suffix.lower() in WORKBOOK_SUFFIXES and not path.name.startswith("~$")


def scan_inputs(paths: Iterable[str | Path], out_dir: Path | None = None) -> InputScan:
    """Files as given, and folders searched recursively (sorted, no duplicates); other
    spreadsheet formats in the folders are listed in ``skipped`` with their reason."""
    scan = InputScan()
    found: list[Path] = []
    for raw in paths:
        path = Path(raw)
        if not path.is_dir():
            found.append(path)
            continue
        for item in sorted(p for p in path.rglob("*") if p.is_file()):
            if item.name.startswith("~$"):
                continue  # a lock file of a workbook open in a spreadsheet application
            reason = OTHER_FORMATS.get(item.suffix.lower())
            if reason is not None:
                scan.skipped.append(SkippedFile(str(item), f"{item.name} is {reason}"))
            elif _wanted(item) and not is_own_output(item, out_dir):
                found.append(item)
    unique: dict[str, Path] = {}
    for path in found:
        unique.setdefault(str(path.resolve()), path)
    scan.workbooks = list(unique.values())
    return scan
