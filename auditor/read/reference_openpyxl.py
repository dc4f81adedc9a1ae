"""The reference reader: openpyxl, loaded twice (formulas, then stored values).

openpyxl keeps either the formula or the stored value of a cell per load, so reading both costs
two loads (7-10 times the single pass of :mod:`auditor.read.stream`, which regaudit uses). This
reader stays because openpyxl is an outside implementation of the format: the tests hold the fast
reader to it on every fixture, and ``read_workbook(path, engine="openpyxl")`` is there to compare
a file that the fast reader is suspected of reading wrongly. openpyxl parses XML through
defusedxml (:func:`auditor.read.workbook.assert_safe_xml` checks that).
"""

from __future__ import annotations

import math
import warnings
import zipfile
from pathlib import Path

from auditor.errors import UnreadableWorkbook
from auditor.grid import parse_cell
from auditor.read.workbook import Cell, CellValue, DefinedName, ErrorValue, Sheet, Workbook


def _convert_value(value: object, data_type: str | None) -> CellValue:
    if value is None:
        return None
    if data_type == "e":  # a text cell holding "#N/A" is text, not an error
        return ErrorValue(str(value))
    if isinstance(value, bool):
        return value
    if isinstance(value, float) and not math.isfinite(value):
        return ErrorValue("#NUM!")  # as the one-pass reader: no spreadsheet holds infinity
    if isinstance(value, (int, float)):
        return float(value) if isinstance(value, float) else int(value)
    if hasattr(value, "isoformat"):
        # Dates: regaudit works on serial numbers as a spreadsheet does.
        from openpyxl.utils.datetime import to_excel

        try:
            return float(to_excel(value))
        except (TypeError, ValueError):
            return str(value)
    return str(value)


def _range_bounds(ref: str) -> tuple[int, int, int, int]:
    first, _, last = ref.partition(":")
    r1, c1 = parse_cell(first)
    r2, c2 = parse_cell(last or first)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)


def read_with_openpyxl(path: Path, digest: str) -> Workbook:
    """Every cell's formula, stored value and number format, through two openpyxl loads.
    ``path`` has passed :func:`auditor.read.workbook.check_container`; it is never written to."""
    import openpyxl
    from openpyxl.worksheet.formula import ArrayFormula, DataTableFormula

    try:
        # openpyxl leaves its zip file open when a part fails to parse: hand it a handle that
        # is closed here whatever happens.
        with warnings.catch_warnings(), open(path, "rb") as handle:
            warnings.simplefilter("ignore")
            book_f = openpyxl.load_workbook(
                handle, read_only=False, data_only=False, keep_vba=False
            )
            handle.seek(0)
            book_v = openpyxl.load_workbook(handle, read_only=False, data_only=True, keep_vba=False)
    except UnreadableWorkbook:
        raise
    except (zipfile.BadZipFile, KeyError, OSError, EOFError) as exc:
        raise UnreadableWorkbook(
            f"{path.name} could not be unpacked ({type(exc).__name__}: {exc}); "
            "the file is damaged or truncated: ask for a fresh copy"
        ) from exc
    except Exception as exc:  # openpyxl raises many types on malformed XML parts
        raise UnreadableWorkbook(
            f"{path.name} has a malformed workbook part ({type(exc).__name__}: {exc}); "
            "open and re-save it in a spreadsheet application, then audit the copy"
        ) from exc

    sheets: dict[str, Sheet] = {}
    names: list[DefinedName] = []
    arrays: dict[tuple[str, int, int], tuple[int, int, int, int]] = {}
    formula_count = 0
    valued_formulas = 0
    for ws_f in book_f.worksheets:
        ws_v = book_v[ws_f.title]
        sheet = Sheet(name=ws_f.title)
        values = {(c.row, c.column): c for row in ws_v.iter_rows() for c in row}
        for row in ws_f.iter_rows():
            for cell_f in row:
                raw = cell_f.value
                in_array = (ws_f.title, cell_f.row, cell_f.column) in arrays
                if raw is None and cell_f.data_type != "f" and not in_array:
                    continue
                cell_v = values.get((cell_f.row, cell_f.column))
                stored = (
                    _convert_value(cell_v.value, cell_v.data_type) if cell_v is not None else None
                )
                formula: str | None = None
                array_ref: str | None = None
                if isinstance(raw, ArrayFormula):
                    formula = raw.text if raw.text.startswith("=") else "=" + raw.text
                    array_ref = raw.ref
                    bounds = _range_bounds(raw.ref)
                    for r in range(bounds[0], bounds[2] + 1):
                        for c in range(bounds[1], bounds[3] + 1):
                            arrays[(ws_f.title, r, c)] = bounds
                elif isinstance(raw, DataTableFormula):
                    formula = None
                elif isinstance(raw, str) and cell_f.data_type == "f":
                    formula = raw
                if formula is not None:
                    formula_count += 1
                    if stored not in (None, 0, "") and not (
                        isinstance(stored, float) and stored == 0.0
                    ):
                        valued_formulas += 1
                    value = stored
                elif in_array:
                    value = stored
                else:
                    value = _convert_value(raw, cell_f.data_type)
                if value is None and formula is None:
                    continue
                sheet.cells[(cell_f.row, cell_f.column)] = Cell(
                    sheet=ws_f.title,
                    row=cell_f.row,
                    col=cell_f.column,
                    value=value,
                    formula=formula,
                    number_format=cell_f.number_format or "General",
                    array_ref=array_ref,
                )
                sheet.max_row = max(sheet.max_row, cell_f.row)
                sheet.max_col = max(sheet.max_col, cell_f.column)
        sheets[ws_f.title] = sheet
        for name, defined in getattr(ws_f, "defined_names", {}).items():
            if defined.attr_text:
                names.append(DefinedName(name, defined.attr_text, scope=ws_f.title))
    for name, defined in book_f.defined_names.items():
        if defined.attr_text:
            scope = None
            if defined.localSheetId is not None:
                scope = book_f.worksheets[int(defined.localSheetId)].title
            names.append(DefinedName(name, defined.attr_text, scope=scope))
    # Cells inside an array block other than its anchor hold only their stored values; they
    # were kept above (``in_array``) and the block is known from ``array_anchors``.
    stored = formula_count == 0 or valued_formulas > 0
    return Workbook(
        path=str(path),
        sha256=digest,
        sheets=sheets,
        names=names,
        stored_values=stored,
        array_anchors=arrays,
    )
