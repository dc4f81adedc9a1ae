"""Whether two readings of one workbook hold exactly the same thing.

Used to prove the fast sheet scanner (:mod:`auditor.read.scan`) equal to the lxml reader on
fixtures, fuzzed and generated workbooks (``tests/read/test_scan.py``) and on folders of real
files (``benchmarks/same_cells.py``). Stricter than ``==`` on cells: ``True == 1 == 1.0`` in
Python, and ``0.0 == -0.0``, so a value is compared by its type and its ``repr`` as well.
:func:`index_differences` proves the same of the index the scanner keeps while it reads
(:class:`~auditor.read.workbook.SheetIndex`) against a walk over the cells.
"""

from __future__ import annotations

import math

from auditor.read.workbook import Cell, Sheet, Workbook, sheet_index


def _cell_key(cell: Cell) -> tuple[object, ...]:
    value = cell.value
    return (
        cell.sheet,
        cell.row,
        cell.col,
        type(value).__name__,
        repr(value),
        cell.formula,
        cell.number_format,
        cell.array_ref,
    )


def workbook_differences(first: Workbook, second: Workbook, most: int = 20) -> list[str]:
    """The differences between two readings, in words (at most ``most`` cells named); empty
    when they hold the same sheets, cells, extents, names, arrays, tables, charts and links."""
    found: list[str] = []
    if list(first.sheets) != list(second.sheets):
        found.append(f"sheets {list(first.sheets)} vs {list(second.sheets)}")
    for name, sheet in first.sheets.items():
        other = second.sheets.get(name)
        if other is None:
            continue
        if (sheet.max_row, sheet.max_col) != (other.max_row, other.max_col):
            found.append(
                f"{name}: extent {sheet.max_row, sheet.max_col} vs {other.max_row, other.max_col}"
            )
        if len(sheet.cells) != len(other.cells):
            found.append(f"{name}: {len(sheet.cells)} cells vs {len(other.cells)}")
        differing = 0
        for key in sheet.cells.keys() | other.cells.keys():
            a, b = sheet.cells.get(key), other.cells.get(key)
            if (a is None) != (b is None) or (
                a is not None and b is not None and _cell_key(a) != _cell_key(b)
            ):
                differing += 1
                if differing <= most:
                    found.append(f"{name}!{key}: {a!r} vs {b!r}")
        if differing > most:
            found.append(f"{name}: {differing - most} more cells differ")
    for label, a_part, b_part in (
        ("names", first.names, second.names),
        ("array blocks", first.array_anchors, second.array_anchors),
        ("stored values", first.stored_values, second.stored_values),
        ("tables", first.tables, second.tables),
        ("charts", first.charts, second.charts),
        ("external links", first.external_links, second.external_links),
        ("sha256", first.sha256, second.sha256),
    ):
        if a_part != b_part:
            found.append(f"{label} differ")
    return found


def _walked(sheet: Sheet) -> tuple[list[tuple[object, ...]], ...]:
    """What the index should hold, found the straightforward way: a walk over every cell."""
    numbers: list[tuple[object, ...]] = []
    for (row, col), cell in sheet.cells.items():
        value = cell.value
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            if math.isfinite(float(value)):
                numbers.append((row, col, repr(float(value)), cell.formula is not None))
    texts = [_cell_key(c) for c in sheet.cells.values() if isinstance(c.value, str)]
    formulas = [_cell_key(c) for c in sheet.cells.values() if c.formula]
    return numbers, texts, formulas


def index_differences(workbook: Workbook) -> list[str]:
    """Where the reader's index of a sheet says other than the sheet's cells (sheets without a
    current index are skipped); empty when every index holds what a walk finds."""
    found: list[str] = []
    for name, sheet in workbook.sheets.items():
        index = sheet_index(sheet)
        if index is None:
            continue
        numbers = [
            (row, col, repr(value), formula) for row, col, value, formula in index.numbers.entries()
        ]
        texts = [_cell_key(c) for c in index.texts]
        formulas = [_cell_key(c) for c in index.formulas]
        for label, held, walked in zip(
            ("numbers", "text cells", "formula cells"),
            (numbers, texts, formulas),
            _walked(sheet),
            strict=True,
        ):
            if held != walked:
                found.append(f"{name}: the index's {label} differ from the cells'")
    return found
