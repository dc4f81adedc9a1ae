"""The engine: formula cells evaluated once each, after the cells they read, without recursion.

Before a cell is evaluated, the formula cells its references reach are evaluated first,
depth-first from an explicit stack, so that a chain of 10,000 dependent cells needs no deep
recursion. A cell met again while it is still open is part of a cycle and reads as ``#CYCLE!``.
Blocks read for references are cached unless they were read in the middle of a cycle.
"""

from __future__ import annotations

from itertools import repeat
from operator import attrgetter
from typing import Any

import numpy as np

from auditor.errors import FormulaError, Unsupported, Unverifiable
from auditor.evaluation.coerce import _constant, _result, constants
from auditor.evaluation.column_reads import IndexedColumns
from auditor.evaluation.expressions import LONG_WAY, ExpressionEvaluator
from auditor.evaluation.failed import Failed as _Failed
from auditor.evaluation.failed import failed as _failed
from auditor.evaluation.formula_index import FormulaIndex
from auditor.evaluation.layout import FormulaLayout, _Key
from auditor.evaluation.values import (
    _REF,
    CYCLE,
    MISSING,
    RangeValue,
    Value,
    _Ctx,
)
from auditor.formula.syntax import Node, Ref, parse, references
from auditor.grid import column_letter
from auditor.read.workbook import Cell, ErrorValue, Workbook

MAX_BLOCK_CELLS = 20_000_000  # about 160 MB of object pointers; larger ranges are refused
_NO_CELL = Cell("", 0, 0, None)  # what an absent cell reads as in a block: empty
_VALUE_OF = attrgetter("value")


class _Defer(Exception):
    """A formula needs a cell not yet evaluated (found through OFFSET or INDEX)."""

    def __init__(self, key: tuple[str, int, int]) -> None:
        super().__init__(key)
        self.key = key


class Evaluator(ExpressionEvaluator):
    """Evaluates the formulas of one workbook; every result is memoised."""

    def __init__(self, workbook: Workbook) -> None:
        self.workbook = workbook
        self._values: dict[_Key, Any] = {}
        self._open: set[_Key] = set()  # cells being evaluated: meeting one again is a cycle
        self._ranges: dict[Ref, RangeValue] = {}
        self._blocks_read: dict[Ref, np.ndarray] = {}  # range_values, outside cycles
        self._computing = False  # inside the evaluation loop of _compute
        self._open_cells_met = 0  # how often a cell still open was read (a cycle)
        layout = FormulaLayout.of(workbook)
        # Where the formula cells are (sheet -> column -> sorted rows) and the array blocks.
        self._index = FormulaIndex(layout.formula_rows, layout.blocks)  # what a range holds
        self._blocks = layout.blocks
        self._members = layout.members
        self._columns = IndexedColumns()

    # --- public ---------------------------------------------------------------------------------

    def cell_value(self, sheet: str, row: int, col: int) -> Value:
        """A cell's value as formulas see it: constants as typed, formulas evaluated (a cell
        inside an array block gets its element of the block's array), None when empty.
        Raises Unsupported (Unverifiable for other workbooks) when a formula cannot be
        evaluated; the message names the cell."""
        found = self.workbook.sheet(sheet)
        if found is None:
            return ErrorValue(_REF)
        value: Value = self._cell(found.name, row, col)
        return value

    def evaluate(self, node_or_text: Node | str, sheet: str) -> Value:
        """A formula (text or tree) evaluated as an array formula on ``sheet``: a scalar, or a
        2-D object array for a block (cells keep None for empty)."""
        found = self.workbook.sheet(sheet)
        name = found.name if found is not None else sheet
        node = (
            parse(node_or_text, name, self.workbook)
            if isinstance(node_or_text, str)
            else node_or_text
        )
        result = self._eval(node, _Ctx(name, array=True))
        if isinstance(result, RangeValue):
            result = result.values
        if isinstance(result, np.ndarray):
            if result.size != 1:
                return result
            result = result[0, 0]
        return 0.0 if result is None or result is MISSING else _result(result)

    def evaluate_cell(self, cell: Cell) -> Value:
        """A cell's as-written value; for an array formula's anchor, the whole block (2-D).
        Raises the cell's own FormulaError or Unsupported when it cannot be evaluated."""
        found = self.workbook.sheet(cell.sheet)
        key = (found.name if found is not None else cell.sheet, cell.row, cell.col)
        if not cell.formula:
            constant: Value = self._cell(*key) if key in self._members else _constant(cell.value)
            return constant
        self._compute(key)
        value: Value = self._values[key]
        if isinstance(value, _Failed):
            raise value.error
        return value

    def range_values(self, ref: Ref) -> np.ndarray:
        """The block's cell values as a 2-D object array (None for empty), formulas evaluated.
        Each caller gets its own array; a block is read once (a data column is asked for by the
        recognisers, the extraction and the design inputs alike)."""
        cached = self._blocks_read.get(ref)
        if cached is not None:
            return cached.copy()
        open_cells_before = self._open_cells_met
        block = self._read_block(ref)
        if self._open_cells_met == open_cells_before:  # a block read mid-cycle is not reused
            self._blocks_read[ref] = block.copy()
        return block

    def _read_block(self, ref: Ref) -> np.ndarray:
        if ref.external is not None:
            raise Unverifiable(f"{ref.address} is in another workbook, which is not at hand")
        sheet = self.workbook.sheet(ref.sheet)
        if sheet is None:
            return np.full((ref.rows, ref.cols), ErrorValue(_REF), dtype=object)
        r2 = min(ref.r2, max(sheet.max_row, ref.r1)) if ref.whole_column else ref.r2
        c2 = min(ref.c2, max(sheet.max_col, ref.c1)) if ref.whole_row else ref.c2
        rows, cols = r2 - ref.r1 + 1, c2 - ref.c1 + 1
        if rows * cols > MAX_BLOCK_CELLS:
            # An explicit A1:XFD1048576 would need 128 GiB as an object array: not evaluated.
            raise Unsupported(
                f"{ref.address} spans {rows * cols:,} cells, more than the "
                f"{MAX_BLOCK_CELLS:,} regaudit evaluates in one range"
            )
        out = np.empty((rows, cols), dtype=object)
        if rows == 1 and cols == 1:  # one cell (=E3/E5): what the loops below give, directly
            out[0, 0] = self._cell(sheet.name, ref.r1, ref.c1)
            return out
        cells = sheet.cells
        row_span = range(ref.r1, r2 + 1)
        column_values = getattr(cells, "column_values", None)  # the compact store's slice
        for j, col in enumerate(range(ref.c1, c2 + 1)):
            stored = column_values(col, ref.r1, r2) if column_values is not None else None
            if stored is None:  # a long column: its numbers from the reader's index
                stored = self._columns.column(sheet, col, ref.r1, r2)
            if stored is None:  # each cell looked up, an absent one read as empty (None)
                found = map(cells.get, zip(row_span, repeat(col)), repeat(_NO_CELL))
                stored = list(map(_VALUE_OF, found))
            out[:, j] = constants(stored)
        # Formula cells and array-block members hold stored values: replace them.
        for row, col in self._index.formula_cells(sheet.name, ref.r1, ref.c1, r2, c2):
            out[row - ref.r1, col - ref.c1] = self._cell(sheet.name, row, col)
        for b_r1, b_c1, b_r2, b_c2 in self._index.blocks_over(sheet.name, ref.r1, ref.c1, r2, c2):
            for row in range(max(b_r1, ref.r1), min(b_r2, r2) + 1):
                for col in range(max(b_c1, ref.c1), min(b_c2, c2) + 1):
                    out[row - ref.r1, col - ref.c1] = self._cell(sheet.name, row, col)
        return out

    def _one_cell(self, ref: Ref) -> Any:
        """What ``_read_block`` puts in a one-cell block, without the block (and without the
        caches of blocks: a cell's value is memoised, so reading it again gives the same)."""
        sheet = self.workbook.sheet(ref.sheet)
        return LONG_WAY if sheet is None else self._cell(sheet.name, ref.r1, ref.c1)

    # --- cells and dependencies -----------------------------------------------------------------

    def _cell(self, sheet: str, row: int, col: int) -> Any:
        block = self._members.get((sheet, row, col))
        if block is not None:
            table = self._formula_result((sheet, block[0], block[1]))
            if isinstance(table, np.ndarray):
                return table[row - block[0], col - block[1]]
            return table
        cell = self.workbook.sheets[sheet].get(row, col)
        if cell is None:
            return None
        if not cell.formula:
            return _constant(cell.value)
        value = self._formula_result((sheet, row, col))
        return value

    def _formula_result(self, key: _Key) -> Any:
        if key not in self._values:
            if key in self._open:
                self._open_cells_met += 1
                return CYCLE
            if self._computing:
                raise _Defer(key)  # reached through a computed reference: evaluate it first
            self._compute(key)
        value = self._values[key]
        if isinstance(value, _Failed):
            sheet, row, col = key
            where = f"{sheet}!{column_letter(col)}{row}"
            kind = Unverifiable if isinstance(value.error, Unverifiable) else Unsupported
            raise kind(f"{where} cannot be evaluated: {value.error}") from value.error
        return value

    def _compute(self, key: _Key) -> None:
        """Evaluate a formula cell after the formula cells it references, without recursion.

        The references a formula states are known before it runs; a cell it reaches only
        through OFFSET or INDEX raises _Defer, is evaluated, and the formula runs again."""
        if key in self._values:
            return
        self._computing = True
        try:
            stack, expanded = [key], set()
            while stack:
                top = stack[-1]
                if top in self._values:
                    stack.pop()
                elif top in expanded:
                    try:
                        self._finish(top)
                    except _Defer as wait:
                        stack.append(wait.key)
                        continue
                    stack.pop()
                else:
                    expanded.add(top)
                    self._open.add(top)
                    for dep in self._dependencies(top):
                        if dep not in self._values and dep not in self._open:
                            stack.append(dep)
        finally:
            self._computing = False

    def _dependencies(self, key: _Key) -> list[_Key]:
        sheet_name, row, col = key
        cell = self.workbook.sheets[sheet_name].get(row, col)
        if cell is None or not cell.formula:
            return []
        try:
            node = parse(cell.formula, sheet_name, self.workbook)
        except FormulaError:
            return []  # reported when the cell itself is evaluated
        deps: list[_Key] = []
        for ref in references(node):
            sheet = self.workbook.sheet(ref.sheet) if ref.external is None else None
            if sheet is not None:
                deps.extend(self._index.reached(sheet.name, ref))
        return deps

    def _finish(self, key: _Key) -> None:
        sheet, row, col = key
        cell = self.workbook.sheets[sheet].get(row, col)
        value: Any
        try:
            if cell is None or not cell.formula:
                value = None if cell is None else _constant(cell.value)
            else:
                node = parse(cell.formula, sheet, self.workbook)
                bounds = self._blocks.get(sheet, {}).get((row, col))
                if bounds is not None:
                    result = self._eval(node, _Ctx(sheet, row, col, array=True))
                    value = self._fit_block(result, bounds)
                else:
                    ctx = _Ctx(sheet, row, col)
                    value = self._final(self._eval(node, ctx), ctx)
        except (Unsupported, FormulaError) as exc:
            value = _failed(exc)
        except RecursionError:
            where = f"{sheet}!{column_letter(col)}{row}"
            value = _Failed(Unsupported(f"the formula in {where} nests too deeply to evaluate"))
        self._open.discard(key)  # not on _Defer: the cell stays open until it has a value
        self._values[key] = value

    def _range_arg(self, ref: Ref) -> RangeValue | ErrorValue:
        cached = self._ranges.get(ref)
        if cached is not None:
            return cached
        if ref.external is not None:
            raise Unverifiable(f"{ref.address} is in another workbook, which is not at hand")
        if self.workbook.sheet(ref.sheet) is None:
            return ErrorValue(_REF)
        open_cells_before = self._open_cells_met
        value = RangeValue(ref, self.range_values(ref))
        if self._open_cells_met == open_cells_before:  # a block read mid-cycle is not reused
            self._ranges[ref] = value
        return value
