"""The cells of a sheet that hold text, found by one walk per sheet and kept for the workbook.

Several recognisers look for words (statistic labels, trendline equations copied as text) and
each used to walk every cell of every sheet; on a sheet of data nearly all cells are numbers.
The reader lists them as it types the cells (:class:`auditor.read.workbook.SheetIndex`); for
a sheet without that list (built in memory) the walk is done once here. Each caller filters the
few text cells itself. A sheet whose cell store changed size since (a test that adds cells) is
walked again.
"""

from __future__ import annotations

from weakref import WeakKeyDictionary

from auditor.read.workbook import Cell, Sheet, Workbook, sheet_index

_Kept = dict[str, tuple[int, int, list[Cell]]]  # sheet name -> (store id, size, text cells)
_BY_WORKBOOK: WeakKeyDictionary[Workbook, _Kept] = WeakKeyDictionary()


def text_cells(workbook: Workbook, sheet: Sheet) -> list[Cell]:
    """Every cell of ``sheet`` whose value is text (typed or a formula's stored text), in the
    sheet's own order (rows, then columns): the reader's list when it has one."""
    index = sheet_index(sheet)
    if index is not None:
        return index.texts
    kept = _BY_WORKBOOK.setdefault(workbook, {})
    store = sheet.cells
    found = kept.get(sheet.name)
    if found is not None and found[0] == id(store) and found[1] == len(store):
        return found[2]
    cells = [cell for cell in store.values() if isinstance(cell.value, str)]
    kept[sheet.name] = (id(store), len(store), cells)
    return cells
