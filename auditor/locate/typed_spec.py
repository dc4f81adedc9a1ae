"""Typed statistic tables as regressions (the recogniser), and what the checks need of them.

A table found by its structure and words (:mod:`auditor.locate.typed_tables`) becomes a
regression over the data :mod:`auditor.locate.typed_source` finds for it. Every typed figure is
then compared with the recomputed one at the digits it shows, like any typed value. A table the
data no longer give is "stale": the check ``typed-stale`` says so once, with the evidence of the
link; a table no data can be linked to is listed with every figure unverifiable, and the check
``typed-source-missing`` says what was searched.
"""

from __future__ import annotations

from contextlib import suppress
from dataclasses import dataclass

from auditor.formula.syntax import Ref
from auditor.grid import parse_cell, split_cell
from auditor.locate.formulas import FormulaLocator
from auditor.locate.pasted_data import DataIndex
from auditor.locate.pasted_spec import unverifiable_values
from auditor.locate.spec import RegressionSpec, StatCell
from auditor.locate.typed_record import TypedTable
from auditor.locate.typed_source import TypedSource, candidates, find_typed_source
from auditor.locate.typed_tables import find_typed_tables
from auditor.model import RegressionResult


@dataclass
class TypedOrigin:
    """What a regression found from a typed table carries besides its ranges."""

    table: TypedTable
    source: TypedSource


def find(locator: FormulaLocator, taken: set[str]) -> list[RegressionSpec]:
    """The recogniser: every consistent typed statistic table whose cells no one took."""
    workbook = locator.workbook
    tables = find_typed_tables(workbook, taken)
    if not tables:
        return []
    index = DataIndex.build(workbook, [])
    # Cells that hold no data: every typed table's, and the statistics bound so far.
    blocked = {(t.sheet, row, col) for t in tables for row, col in t.footprint}
    for address in taken:
        sheet, coord = split_cell(address)
        with suppress(ValueError):  # a statistic that is no cell of a sheet blocks nothing
            blocked.add((sheet, *parse_cell(coord)))
    pairs = candidates(workbook, index, blocked)
    specs = []
    for table in tables:
        source = find_typed_source(table, pairs)
        anchor = table.anchor
        placeholder = Ref(table.sheet, anchor.row, anchor.col, anchor.row, anchor.col)
        spec = RegressionSpec(
            f"{table.sheet}/{anchor.coord}",
            table.sheet,
            source.x or placeholder,
            source.y or placeholder,
            True,
            "labels",
        )
        for role, cell in [*table.cells.items(), *table.claims.items()]:
            stat = StatCell(role, cell, "label")
            stat.label = table.labels.get(role, "")
            spec.stats[role] = stat
        spec.label = table.title
        spec.typed = TypedOrigin(table, source)
        taken.update(cell.address for cell in [*table.cells.values(), *table.claims.values()])
        specs.append(spec)
    return specs


def typed_origin(spec: RegressionSpec) -> TypedOrigin | None:
    found = getattr(spec, "typed", None)
    return found if isinstance(found, TypedOrigin) else None


def typed_stale(spec: RegressionSpec) -> bool:
    """A typed table its data no longer give: one finding says so (``typed-stale``)."""
    found = typed_origin(spec)
    return found is not None and found.source.status == "stale"


def place_only_link(spec: RegressionSpec) -> str:
    """Why a typed table's figures are unverifiable against its data ("" when they are not): the
    data do not give them, and only their place, or words on another sheet, tie them together."""
    found = typed_origin(spec)
    if found is None or found.source.status != "stale" or found.source.strong:
        return ""
    return (
        f"{spec.y.address} on {spec.x.address} do not give it, and nothing but "
        f"{found.source.tie} ties the table to these data"
    )


def typed_unsourced_result(spec: RegressionSpec) -> RegressionResult | None:
    """The result of a typed table no data could be linked to: listed, every figure
    unverifiable; the check typed-source-missing says what was searched. Never an alarm."""
    found = typed_origin(spec)
    if found is None or found.source.status != "none":
        return None
    reported = unverifiable_values(spec, f"no data found: {found.source.evidence}", "typed")
    options = found.table.df_options
    return RegressionResult(
        id=spec.id,
        sheet=spec.sheet,
        x_range="(no data found)",
        y_range="(no data found)",
        found_by="labels",
        n=options[0] + 2 if len(options) == 1 else 0,
        intercept=True,
        reported=reported,
        label=spec.label,
    )
