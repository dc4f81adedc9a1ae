"""Annotated copies: ``NAME.audited.xlsx`` beside the reports, a note on every flagged cell.

For each audited workbook with findings, openpyxl loads the source (read only; the file is never
written) and saves a copy in the output folder in which

* every cell a finding names carries a note with the finding's severity, message and fix (a
  range's note sits on its top-left cell) and a light fill in the severity's colour, and
* the first sheet's A1 carries a note saying what the copy is, where it came from, and what it may
  have lost.

openpyxl does not carry every part of a package over faithfully (charts, images, pivot tables,
macros, shapes...); those parts are detected from the package's part names before loading, and
openpyxl's own warnings while loading are kept, so the reviewer is told rather than surprised. A
target that would overwrite any audited file is refused before anything is written.
"""

from __future__ import annotations

import re
import warnings
import zipfile
from collections.abc import Iterable
from pathlib import Path

import openpyxl
from openpyxl.comments import Comment
from openpyxl.styles import PatternFill
from openpyxl.utils.cell import range_boundaries
from openpyxl.worksheet.worksheet import Worksheet

from auditor.errors import UnreadableWorkbook
from auditor.model import SEVERITY_RANK, AuditResult, Finding, WorkbookResult, worst
from auditor.read.container import check_container
from auditor.report import audited_files
from auditor.report.common import AnnotatedCopy, copy_caveat
from auditor.report.output import atomic_output, refuse_inputs
from auditor.report.xlsx.style import PALETTE

COPY_SUFFIX = ".audited.xlsx"
AUTHOR = "regaudit"
MAX_FILLED_CELLS = 5000  # a whole-column range gets its note, not a million fills
NOTE_WIDTH = 320  # points; openpyxl's default note is too small for a message and a fix
LINE_POINTS = 13
DRAWING_LIMIT = 5_000_000  # bytes of a drawing part read to look for shapes

# Package parts that openpyxl drops or rebuilds, named (singular, plural) for the caveat.
LOSSY_PARTS: tuple[tuple[re.Pattern[str], str, str], ...] = (
    (re.compile(r"^xl/charts/chart\d+\.xml$"), "chart", "charts"),
    (re.compile(r"^xl/chartsheets/sheet\d+\.xml$"), "chart sheet", "chart sheets"),
    (re.compile(r"^xl/media/"), "image", "images"),
    (re.compile(r"^xl/pivotTables/pivotTable\d+\.xml$"), "pivot table", "pivot tables"),
    (re.compile(r"^xl/slicers/"), "slicer", "slicers"),
    (re.compile(r"^xl/timelines/"), "timeline", "timelines"),
    (re.compile(r"^xl/embeddings/"), "embedded object", "embedded objects"),
    (re.compile(r"^xl/ctrlProps/"), "form control", "form controls"),
    (
        re.compile(r"^xl/threadedComments/"),
        "sheet of threaded comments",
        "sheets of threaded comments",
    ),
    (re.compile(r"^xl/vbaProject\.bin$"), "macro project", "macro projects"),
)
DRAWING = re.compile(r"^xl/drawings/drawing\d+\.xml$")
SHAPE = re.compile(rb"<(?:xdr:)?sp[ >]")


def lossy_content(path: Path) -> list[str]:
    """What of ``path`` an openpyxl copy may lose, in words ("2 charts"), from its part names."""
    counts: dict[tuple[str, str], int] = {}
    with zipfile.ZipFile(path) as archive:
        for info in archive.infolist():
            for pattern, singular, plural in LOSSY_PARTS:
                if pattern.search(info.filename):
                    counts[singular, plural] = counts.get((singular, plural), 0) + 1
            if DRAWING.match(info.filename) and info.file_size <= DRAWING_LIMIT:
                shapes = len(SHAPE.findall(archive.read(info)))
                if shapes:
                    key = ("drawn shape", "drawn shapes")
                    counts[key] = counts.get(key, 0) + shapes
    return [f"{n} {singular if n == 1 else plural}" for (singular, plural), n in counts.items()]


def _warnings(caught: list[warnings.WarningMessage]) -> list[str]:
    return sorted({str(w.message).strip().rstrip(".") for w in caught})


def copy_targets(result: AuditResult, out_dir: Path) -> list[tuple[WorkbookResult, Path]]:
    """The workbooks that get a copy, each with a unique NAME.audited.xlsx in ``out_dir``."""
    chosen = [w for w in result.workbooks if w.status != "unreadable" and w.all_findings()]
    taken: set[str] = set()
    targets = []
    for workbook in chosen:
        stem = Path(workbook.path).stem
        name, number = f"{stem}{COPY_SUFFIX}", 1
        while name.lower() in taken:  # two inputs of one name from different folders
            number += 1
            name = f"{stem}-{number}{COPY_SUFFIX}"
        taken.add(name.lower())
        targets.append((workbook, out_dir / name))
    return targets


def _note_text(findings: list[Finding]) -> str:
    blocks = []
    for finding in sorted(findings, key=lambda f: SEVERITY_RANK[f.severity]):
        block = f"[{finding.severity}] {finding.check}: {finding.message}"
        if finding.fix:
            block += f"\nFix: {finding.fix}"
        blocks.append(block)
    return "\n\n".join(blocks)


def _attach(sheet: Worksheet, coordinate: str, text: str) -> None:
    cell = sheet[coordinate]
    if cell.comment is not None:  # keep the author's own note above ours
        text = f"{cell.comment.text}\n\n{AUTHOR}:\n{text}"
    lines = sum(1 + len(line) // 60 for line in text.splitlines())
    cell.comment = Comment(text, AUTHOR, height=max(79, LINE_POINTS * lines), width=NOTE_WIDTH)


def _fill(sheet: Worksheet, reference: str, colour: str) -> str:
    """Fill the cells of ``reference`` (capped); return the top-left cell for the note."""
    min_col, min_row, max_col, max_row = range_boundaries(reference)
    min_row = min_row or 1
    max_row = max_row or min_row  # a whole column: only its first cell
    max_col = max_col or min_col
    fill = PatternFill(fill_type="solid", fgColor="FF" + colour.lstrip("#"))
    if (max_row - min_row + 1) * (max_col - min_col + 1) > MAX_FILLED_CELLS:
        max_row, max_col = min_row, min_col
    for row in sheet.iter_rows(min_row, max_row, min_col, max_col):
        for cell in row:
            cell.fill = fill
    return str(sheet.cell(min_row, min_col).coordinate)


def annotate_book(
    book: openpyxl.Workbook, workbook: WorkbookResult, result: AuditResult, losses: list[str]
) -> int:
    """Put the notes and fills into ``book``; return how many cells carry a finding's note."""
    by_cell: dict[tuple[str, str], list[Finding]] = {}
    homeless: list[Finding] = []  # findings without a cell that exists in the copy
    for finding in workbook.all_findings():
        placed = False
        for reference in finding.cells:
            sheet_name, _, address = reference.rpartition("!")
            sheet_name = sheet_name.strip("'")
            if sheet_name in book.sheetnames and address:
                by_cell.setdefault((sheet_name, address.replace("$", "")), []).append(finding)
                placed = True
        if not placed:
            homeless.append(finding)
    anchors: dict[tuple[str, str], list[Finding]] = {}
    for (sheet_name, address), findings in by_cell.items():
        colour = PALETTE[worst(findings) or "info"][1]
        anchor = _fill(book[sheet_name], address, colour)
        noted = anchors.setdefault((sheet_name, anchor), [])
        # One note per finding: a cell named twice, or a range and its own top-left cell,
        # would otherwise repeat it.
        noted.extend(f for f in findings if not any(f is other for other in noted))
    for (sheet_name, anchor), findings in anchors.items():
        _attach(book[sheet_name], anchor, _note_text(findings))

    caveat = copy_caveat(AnnotatedCopy(workbook.path, "", len(anchors), tuple(losses)))
    intro = (
        f"Annotated copy made by regaudit {result.version} ({result.generated or 'no date'}) "
        f"from {workbook.path}, which is unchanged (SHA-256 {workbook.sha256[:16]}…). "
        f"{len(anchors)} flagged cell(s) carry a note with the message and the fix. {caveat}"
    )
    if homeless:
        intro += "\n\nFindings without a cell of their own:\n" + _note_text(homeless)
    first = book.worksheets[0]
    _attach(first, "A1", intro)  # keeps a finding's note on A1, if there is one, below ours
    book.calculation.fullCalcOnLoad = True  # openpyxl drops stored values; recompute on opening
    return len(anchors)


def _annotate_one(
    workbook: WorkbookResult, target: Path, result: AuditResult, inputs: set[Path]
) -> AnnotatedCopy:
    source = Path(workbook.path)
    check_container(source)  # the same limits the audit applied, before inflating anything
    losses = lossy_content(source)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            book = openpyxl.load_workbook(source, keep_links=True)
        except (ValueError, KeyError, TypeError, zipfile.BadZipFile) as exc:
            # openpyxl's own ways of refusing a package it cannot model; a bug of ours below
            # this point keeps its traceback.
            raise UnreadableWorkbook(
                f"openpyxl cannot load it ({type(exc).__name__}: {exc})"
            ) from exc
    losses += [f'what openpyxl warned of ("{text}")' for text in _warnings(caught)]
    notes = annotate_book(book, workbook, result, losses)
    with atomic_output(target, inputs) as handle:
        book.save(handle)
    return AnnotatedCopy(workbook.path, str(target), notes, tuple(losses))


def annotate_copies(
    result: AuditResult, out_dir: Path, input_paths: Iterable[Path | str] = ()
) -> list[AnnotatedCopy]:
    """Write one annotated copy per audited workbook with findings; return what was written.

    Raises UsageError, before writing anything, when a copy would overwrite an audited file. A
    workbook openpyxl cannot load gets no copy; its record says why (``error``).
    """
    out_dir = Path(out_dir)
    inputs = audited_files(result) | {Path(p) for p in input_paths}
    targets = copy_targets(result, out_dir)
    for workbook, target in targets:
        refuse_inputs(target, inputs | {Path(workbook.path)})
    out_dir.mkdir(parents=True, exist_ok=True)
    copies = []
    for workbook, target in targets:
        try:
            copies.append(_annotate_one(workbook, target, result, inputs))
        except (UnreadableWorkbook, OSError) as exc:
            # The audit read the file its own way; if openpyxl cannot, the others still get copies.
            why = f"no copy was made: {type(exc).__name__}: {exc}"
            copies.append(AnnotatedCopy(workbook.path, str(target), 0, (), error=why))
    return copies
