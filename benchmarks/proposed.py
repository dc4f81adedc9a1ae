"""Patches proposed to the pipeline's owners, applied here only to measure what they would give.

``python benchmarks/run.py --proposed`` installs them before timing; nothing in the package is
changed. Each replacement gives the same answers as the function it stands in for (``check``
compares the audit JSON of every fixture with and without them).

* (landed) ``extract._looks_like_total`` summed all earlier y values for every row: quadratic,
  4 minutes at 200,000 rows. extract/intended.py now keeps a running total; nothing is patched
  for it.
* ``install_columnar``: a columnar store for constant cells (memory prototype, see below).
"""

from __future__ import annotations

import json
from collections.abc import Iterator, MutableMapping
from pathlib import Path
from typing import Any


def install() -> None:
    """Nothing left to patch: the running-total fix landed in extract/intended.py."""


def check(fixtures: Path) -> None:
    """The patches that remain change no fixture's audit (kept for the next proposal)."""
    from auditor.pipeline.audit import audit_workbook
    from auditor.policy import load_policy

    policy = load_policy("general")
    paths = sorted(fixtures.glob("*/*.xlsx"))
    before = [json.dumps(audit_workbook(p, policy).to_dict(), default=str) for p in paths]
    install()
    after = [json.dumps(audit_workbook(p, policy).to_dict(), default=str) for p in paths]
    if before != after:
        changed = [p.name for p, a, b in zip(paths, before, after, strict=True) if a != b]
        raise SystemExit(f"the proposed patches change the audit of {changed}")


# --- a columnar store for constant cells (a measurement prototype for the reading layer) ------
#
# A Cell in a dict costs about 235 bytes (the slotted Cell 88, its (row, col) key 56, the dict
# entry about 45, the value 24, a share of the row number): 470 MB for the 2 million cells of
# a 1,048,576-row sheet. Constants stored by column cost about 40 bytes (a list slot, the value,
# a format slot). ``Sheet.cells`` stays a mapping of (row, col) to Cell; Cells of constants are
# made when asked for. The prototype converts each sheet after reading (the reader would write
# the columns directly); only the audit's peak after reading is what it measures.


class ColumnarCells(MutableMapping):  # type: ignore[type-arg]
    def __init__(self, sheet: str, cells: dict[tuple[int, int], Any]) -> None:
        self._sheet = sheet
        self._cells: dict[tuple[int, int], Any] = {}  # formulas, array members, assignments
        self._columns: dict[int, tuple[int, list[Any], list[str]]] = {}
        by_column: dict[int, list[Any]] = {}
        for key in list(cells):
            cell = cells.pop(key)
            if cell.formula is None and cell.array_ref is None:
                by_column.setdefault(key[1], []).append(cell)
            else:
                self._cells[key] = cell
        for col, column in by_column.items():
            column.sort(key=lambda c: c.row)
            first = column[0].row
            values: list[Any] = [None] * (column[-1].row - first + 1)
            formats: list[str] = ["General"] * len(values)
            for cell in column:
                values[cell.row - first] = cell.value
                formats[cell.row - first] = cell.number_format
            self._columns[col] = (first, values, formats)
        self._count = len(self._cells) + sum(len(c) for c in by_column.values())

    def _constant(self, row: int, col: int) -> Any:
        from auditor.read.workbook import Cell

        column = self._columns.get(col)
        if column is None:
            return None
        first, values, formats = column
        index = row - first
        if 0 <= index < len(values) and values[index] is not None:
            return Cell(self._sheet, row, col, values[index], None, formats[index])
        return None

    def get(self, key: Any, default: Any = None) -> Any:
        found = self._cells.get(key)
        if found is None:
            found = self._constant(*key)
        return default if found is None else found

    def __getitem__(self, key: Any) -> Any:
        found = self.get(key)
        if found is None:
            raise KeyError(key)
        return found

    def __contains__(self, key: object) -> bool:
        return self.get(key) is not None

    def __setitem__(self, key: Any, cell: Any) -> None:
        if key not in self:
            self._count += 1
        self._cells[key] = cell

    def __delitem__(self, key: Any) -> None:
        raise NotImplementedError("the prototype is read-only for streamed constants")

    def __iter__(self) -> Iterator[tuple[int, int]]:
        yield from self._cells
        for col, (first, values, _formats) in self._columns.items():
            for index, value in enumerate(values):
                if value is not None and (first + index, col) not in self._cells:
                    yield (first + index, col)

    def __len__(self) -> int:
        return self._count


def install_columnar() -> None:
    import auditor.pipeline.audit
    from auditor.read import workbook as workbook_module

    original = workbook_module.read_workbook

    def read_compact(path: Any, engine: str = "stream") -> Any:
        book = original(path, engine)
        for sheet in book.sheets.values():
            sheet.cells = ColumnarCells(sheet.name, sheet.cells)  # type: ignore[assignment]
        return book

    auditor.pipeline.audit.read_workbook = read_compact  # type: ignore[assignment]
