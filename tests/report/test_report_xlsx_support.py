"""Helpers shared by the audit.xlsx tests (imported, like test_report_sample; holds no test).

``fixture_audit`` audits the committed fixture workbooks once per test session; ``chart_formulas``
reads the package itself (zip and XML, no openpyxl) to find which ranges each sheet's charts
plot, because openpyxl does not read charts back.
"""

from __future__ import annotations

import functools
import io
import posixpath
import re
import xml.etree.ElementTree as ET
import zipfile
from pathlib import Path

from auditor.model import AuditResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.report.xlsx.workbook import XlsxReporter

ROOT = Path(__file__).resolve().parents[2]
FIXTURE_WORKBOOKS = ROOT / "fixtures" / "workbooks"
TIMESTAMP = "2025-02-03T04:05:06Z"
REL = "{http://schemas.openxmlformats.org/package/2006/relationships}Relationship"
MAIN = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"
OFFICE_REL = "{http://schemas.openxmlformats.org/officeDocument/2006/relationships}id"
CHART_F = "{http://schemas.openxmlformats.org/drawingml/2006/chart}f"


@functools.cache
def fixture_audit() -> AuditResult:
    """The audit of fixtures/workbooks (do not mutate: it is shared)."""
    paths = collect_inputs([FIXTURE_WORKBOOKS])
    workbooks = audit_batch(paths, load_policy("general"), jobs=1)
    return AuditResult(
        version="0.1.0",
        policy="general",
        workbooks=workbooks,
        generated=TIMESTAMP,
        inputs=[str(FIXTURE_WORKBOOKS)],
    )


def xlsx_bytes(result: AuditResult, reporter: XlsxReporter | None = None) -> bytes:
    handle = io.BytesIO()
    (reporter or XlsxReporter(detail="all")).write(result, handle)  # every detail sheet
    return handle.getvalue()


def _rels(archive: zipfile.ZipFile, part: str) -> dict[str, str]:
    """Relationship id -> target part (absolute inside the package) of ``part``."""
    folder, name = posixpath.split(part)
    rels_part = posixpath.join(folder, "_rels", name + ".rels")
    if rels_part not in archive.namelist():
        return {}
    root = ET.fromstring(archive.read(rels_part))
    return {
        rel.get("Id", ""): posixpath.normpath(posixpath.join(folder, rel.get("Target", "")))
        for rel in root.iter(REL)
    }


def chart_formulas(data: bytes) -> dict[str, list[list[str]]]:
    """Sheet name -> one list per chart of the range formulas (``<c:f>``) its series plot."""
    found: dict[str, list[list[str]]] = {}
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        book = ET.fromstring(archive.read("xl/workbook.xml"))
        book_rels = _rels(archive, "xl/workbook.xml")
        for sheet in book.iter(f"{MAIN}sheet"):
            part = book_rels[sheet.get(OFFICE_REL, "")]
            charts: list[list[str]] = []
            for drawing in _rels(archive, part).values():
                if "/drawings/" not in drawing:
                    continue
                targets = _rels(archive, drawing)
                # The drawing lists its charts in the order they were inserted.
                order = re.findall(rb'<c:chart [^>]*r:id="([^"]+)"', archive.read(drawing))
                for rel_id in order:
                    root = ET.fromstring(archive.read(targets[rel_id.decode()]))
                    charts.append([f.text or "" for f in root.iter(CHART_F)])
            found[sheet.get("name", "")] = charts
    return found


RANGE = re.compile(
    r"^'?(?P<sheet>.+?)'?!\$(?P<c1>[A-Z]+)\$(?P<r1>\d+)(?::\$(?P<c2>[A-Z]+)\$(?P<r2>\d+))?$"
)


def split_range(formula: str) -> tuple[str, str, int, str, int]:
    """ "'R01 x'!$L$40:$L$46" -> ('R01 x', 'L', 40, 'L', 46); one cell gives its column twice."""
    match = RANGE.match(formula)
    assert match, f"not a range formula: {formula!r}"
    sheet = match["sheet"].replace("''", "'")
    last_col, last_row = match["c2"] or match["c1"], match["r2"] or match["r1"]
    return sheet, match["c1"], int(match["r1"]), last_col, int(last_row)
