"""Regressions found by their formulas: the calls, then the cells built on them."""

from __future__ import annotations

import re
from typing import TYPE_CHECKING, Any

from auditor.errors import FormulaError
from auditor.evaluation.evaluator import Evaluator
from auditor.formula.nodes import moved_from
from auditor.formula.syntax import Call, Node, Ref, calls, references
from auditor.locate.cell_parses import CellParses
from auditor.locate.formula_dependents import refs_roles, role_of_dependent, stat_addresses
from auditor.locate.formula_readers import CellReaders
from auditor.locate.formula_reads import FormulaReads
from auditor.locate.grid_labels import statistic_label
from auditor.locate.grouping import PairGroups, adopt_strays, correlation_only, primary_pair
from auditor.locate.parsed_order import ParsedOrder
from auditor.locate.roles import (
    linest_block_role,
    linest_index_role,
    role_from_label,
    role_from_shape,
    single_cell_linest_role,
)
from auditor.locate.spec import (
    MAX_FOLLOW_ROUNDS,
    PAIR_FUNCS,
    PairUse,
    RegressionSpec,
    StatCell,
    label_for,
    pair_uses,
)
from auditor.locate.typed_inputs import typed_df_cells
from auditor.model import STAT_KEYS
from auditor.read.workbook import Cell, Workbook

if TYPE_CHECKING:
    from openpyxl.formula.tokenizer import Token

Key = tuple[str, int, int]  # a formula cell: (sheet, row, column)


class FormulaLocator:
    """Parses every formula once and finds regressions from the calls that name their data."""

    def __init__(self, workbook: Workbook, bindings: list[dict[str, Any]] | None = None):
        self.workbook = workbook
        self.bindings = bindings or []
        self.evaluator: Evaluator | None = None  # set by the audit; made on demand otherwise
        self.parsed: dict[Key, Node] = {}
        self.parse_errors: list[tuple[Cell, str]] = []
        self._refs_by_key: dict[Key, list[Ref]] = {}
        self._readers: CellReaders | None = None
        self._reads: FormulaReads | None = None  # what reads the data, once all are parsed
        self._order: ParsedOrder | None = None  # the parsed formulas' positions, once parsed
        parses = CellParses(workbook)
        for cell in workbook.formula_cells():
            try:
                self.parsed[(cell.sheet, cell.row, cell.col)] = parses.parse(
                    cell, cell.formula or ""
                )
            except FormulaError as exc:
                self.parse_errors.append((cell, str(exc)))

    def node(self, cell: Cell) -> Node | None:
        return self.parsed.get((cell.sheet, cell.row, cell.col))

    # -- formulas ---------------------------------------------------------------------------
    def from_formulas(self, taken: set[str] | None = None) -> list[RegressionSpec]:
        uses: list[PairUse] = []
        pairless: set[object] = set()  # shared anchors whose moved trees call no pair function
        for key, node in self.parsed.items():
            maker = moved_from(node)  # its trees have the same calls, but for references
            if maker is not None and (
                maker in pairless or PAIR_FUNCS.isdisjoint(c.name for c in calls(node))
            ):
                pairless.add(maker)
                continue
            cell = self.workbook.cell(*key)
            if cell is not None:
                uses.extend(pair_uses(cell, node))
        groups = adopt_strays(PairGroups(uses).groups())
        self.anchor_cells = {(u.cell.sheet, u.cell.row, u.cell.col) for u in uses}
        specs = []
        for group in groups:
            if self._correlation_only(group):
                continue
            x, y = primary_pair(group)
            intercept = (
                all(u.intercept for u in group if u.function == "LINEST")
                if any(u.function == "LINEST" for u in group)
                else True
            )
            first = min(group, key=lambda u: (u.cell.sheet, u.cell.row, u.cell.col)).cell
            spec = RegressionSpec(
                id=f"{first.sheet}/{first.coord}",
                sheet=first.sheet,
                x=x,
                y=y,
                intercept=intercept,
                found_by="formulas",
                uses=group,
            )
            self._assign_anchor_roles(spec)
            self._follow_dependents(spec)
            specs.append(spec)
        return specs

    def _correlation_only(self, group: list[PairUse]) -> bool:
        """Cells that compute only a correlation coefficient (r, not r squared)."""
        return correlation_only(group) and all(
            role_from_shape(node) == "r"
            for node in (self.node(use.cell) for use in group)
            if node is not None
        )

    def _put(self, spec: RegressionSpec, key: str | None, stat: StatCell) -> None:
        """Attach a statistic cell; a second cell holding the same statistic gets ``key@A1``."""
        if key is None or not (key in STAT_KEYS or re.match(r"^[a-z_]+\[\d+\]$", key)):
            return
        at = (stat.cell.sheet, stat.cell.row, stat.cell.col)  # the address, without its text
        if any((s.cell.sheet, s.cell.row, s.cell.col) == at for s in spec.stats.values()):
            return
        if key in spec.stats:
            key = f"{key}@{stat.cell.coord}"
        stat.key = key
        stat.label = stat.label or label_for(self.workbook, stat.cell) or ""
        spec.stats[key] = stat

    def _assign_anchor_roles(self, spec: RegressionSpec) -> None:
        k = spec.x_columns
        for use in sorted(spec.uses, key=lambda u: (u.cell.row, u.cell.col)):
            cell, node = use.cell, self.node(use.cell)
            if node is None:
                continue
            if use.function == "LINEST" and cell.array_ref:
                self._assign_block(spec, cell, k, use.intercept)
                continue
            role = (
                linest_index_role(node, k, use.intercept)
                or role_from_shape(node)
                or single_cell_linest_role(node, k, use.intercept)
            )
            if role in (None, "p", "t_critical_or_ci"):
                role = role_of_dependent(self.workbook, spec, cell, node)
            self._put(spec, role, StatCell(role or "", cell, "formula"))

    def _assign_block(self, spec: RegressionSpec, anchor: Cell, k: int, intercept: bool) -> None:
        bounds = self.workbook.array_anchors.get((anchor.sheet, anchor.row, anchor.col))
        if bounds is None:
            return
        r1, c1, r2, c2 = bounds
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                role = linest_block_role(r - r1 + 1, c - c1 + 1, k, intercept)
                cell = self.workbook.cell(anchor.sheet, r, c) or Cell(anchor.sheet, r, c, None)
                cell_with_formula = Cell(
                    cell.sheet,
                    r,
                    c,
                    cell.value,
                    anchor.formula,
                    cell.number_format,
                    anchor.array_ref,
                )
                self._put(
                    spec,
                    role,
                    StatCell(
                        role or "",
                        cell_with_formula,
                        "linest-block",
                        (r - r1, c - c1),
                        column_header=self._text_above(anchor.sheet, r1, c),
                    ),
                )

    def _text_above(self, sheet_name: str, row: int, col: int) -> str:
        """The nearest text within three rows above a cell (a column header of a block)."""
        sheet = self.workbook.sheet(sheet_name)
        for r in range(row - 1, max(0, row - 4), -1):
            value = sheet.value(r, col) if sheet is not None else None
            if isinstance(value, str) and value.strip():
                return value
        return ""

    def x_headers(self, spec: RegressionSpec) -> list[str]:
        return [
            self._text_above(spec.x.sheet, spec.x.r1, c) for c in range(spec.x.c1, spec.x.c2 + 1)
        ]

    def _reverse_index(self) -> CellReaders:
        """Which formulas read each cell (within the window ``refs_roles`` looks at), built
        once: following dependents then looks up readers instead of rescanning every formula."""
        if self._readers is None:
            for key, node in self.parsed.items():
                self._refs_by_key.setdefault(key, references(node))
            self._readers = CellReaders(self._refs_by_key)
        return self._readers

    def _stat_readers(
        self, spec: RegressionSpec, known: dict[tuple[str, int, int], str] | None = None
    ) -> set[Key]:
        readers = self._reverse_index()
        found = set(readers.wide)
        for address in stat_addresses(spec) if known is None else known:
            found |= readers.of(address)
        return found

    def follow_dependents(self, spec: RegressionSpec) -> None:
        """Attach the cells built on a regression's statistics (t, p, SE, df, limits)."""
        self._follow_dependents(spec)

    def _follow_dependents(self, spec: RegressionSpec) -> None:
        data = [spec.x, spec.y]  # not the stray calls' ranges: those belong to a neighbour
        taken = {(s.cell.sheet, s.cell.row, s.cell.col) for s in spec.stats.values()}
        taken |= {(u.cell.sheet, u.cell.row, u.cell.col) for u in spec.uses}
        self._reverse_index()
        sheets = {spec.sheet.lower(), spec.x.sheet.lower()}
        if self._reads is None:
            self._reads = FormulaReads(self._refs_by_key)
        data_readers = self._reads.readers(data, sheets)
        order = self._order = self._order or ParsedOrder(self.parsed)
        for _ in range(MAX_FOLLOW_ROUNDS):
            added = False
            known = stat_addresses(spec)  # again after each statistic attached
            stat_readers = self._stat_readers(spec, known)
            # The formulas reading the statistics or the data, in the parsed order.
            pending, next_one = order.after(stat_readers | data_readers, -1), 0
            while next_one < len(pending):
                position = pending[next_one]
                next_one += 1
                key = order.keys[position]
                node = self.parsed[key]
                if key in taken or key in self.anchor_cells:
                    continue  # another regression's own call is never a dependent of this one
                cell = self.workbook.cell(*key)
                if cell is None:
                    continue
                touches_stats = bool(refs_roles(spec, node, known))
                touches_data = key in data_readers
                if not (touches_stats or touches_data):
                    continue
                if touches_data and not touches_stats and not self._near(spec, cell):
                    continue
                role = role_of_dependent(self.workbook, spec, cell, node, known)
                taken.add(key)
                label = statistic_label(self.workbook, cell)
                if (
                    role
                    and role in spec.stats
                    and role_from_label(label or "") != role
                    and not role.startswith(("se_", "t_"))
                    and not (isinstance(node, Call) and node.name == "INDEX")
                ):
                    continue  # a second p or count counts only when labelled so; SE and t
                    # built by hand are unambiguous shapes
                if role:
                    self._put(spec, role, StatCell(role, cell, "formula"))
                    known = stat_addresses(spec)
                    stat_readers = self._stat_readers(spec, known)
                    pending, next_one = order.after(stat_readers | data_readers, position), 0
                    added = True
            if not added:
                break
        for typed_df in typed_df_cells(self.workbook, self.parsed, spec):
            self._put(spec, "df", StatCell("df", typed_df, "chain"))  # the df a p reads

    def _near(self, spec: RegressionSpec, cell: Cell) -> bool:
        """A data-only formula (COUNT(x)-2) belongs to the block it sits in."""
        for stat in spec.stats.values():
            if (
                stat.cell.sheet == cell.sheet
                and abs(stat.cell.row - cell.row) <= 8
                and abs(stat.cell.col - cell.col) <= 4
            ):
                return True
        return False


def shared_tokens(workbook: Workbook, cell: Cell, text: str) -> list[Token] | None:
    """openpyxl's tokens of ``text``, the formula of ``cell``, when its sheet's shared-formula
    groups give them (None: tokenise the text)."""
    sheet = workbook.sheets.get(cell.sheet)
    groups = sheet.shared if sheet is not None else None
    return groups.tokens(cell.row, cell.col, text) if groups is not None else None
