"""Copied blocks: sibling blocks should hold the same formulas, each on its own data.

Three faults, in the order they are looked for (a cell is reported once):

1. a reference into *another* sibling's data or results (the copy still points back);
2. a cell whose formula, in frame form (:mod:`formula_blocks`), differs from the form most of its
   siblings share at the same place (an edited or half-updated copy);
3. a reference anchored with ``$`` to the block's own data where a sibling uses a relative one:
   right today, but a copy of this block will keep pointing here (a risk, minor).

A call whose x or y range differs from its own regression's is left to ranges-disagree.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

from auditor.checks.base import check
from auditor.checks.block_moves import repoint, translate
from auditor.checks.formula_blocks import (
    Block,
    Names,
    Position,
    frame_forms,
    frame_of,
    no_names,
    placed,
    workbook_blocks,
)
from auditor.checks.formula_equivalence import computes_the_same
from auditor.checks.formula_support import reached_cells, severity_in_result
from auditor.context import WorkbookContext
from auditor.errors import FormulaError
from auditor.formula.operands import Reference
from auditor.formula.r1c1 import a1_text, references
from auditor.model import Finding, Severity

CHECK = "sibling-formula-differs"


@dataclass
class Member:
    block: Block
    position: Position
    cell: str
    sheet: str
    formula: str
    form: str
    coarse: str  # the form with every reference into its own data as {data}
    names: Names

    def references(self) -> list[Reference]:
        if self.names is no_names:  # no defined names: the references kept per formula text
            return references(self.formula)
        return references(self.formula, lambda operand: self.names(operand, self.sheet))


def _names(context: WorkbookContext) -> Names:
    """Defined names as the references they stand for (sheet scope first)."""
    workbook = context.workbook
    if workbook is None or not workbook.names:
        return no_names  # nothing to expand (every name would stay as written)

    def resolve(name: str, sheet: str) -> str | None:
        refers_to = workbook.resolve_name(name, sheet)
        return refers_to.lstrip("=") if refers_to else None

    return resolve


def _members(group: list[Block], covered: set[str], names: Names) -> dict[Position, list[Member]]:
    by_position: dict[Position, list[Member]] = {}
    for block in group:
        for position, stat in block.cells.items():
            formula = stat.cell.formula
            if not formula or stat.cell.address in covered:
                continue
            try:
                form, coarse = frame_forms(formula, block, stat.cell.sheet, names)
            except FormulaError:
                continue
            cell = stat.cell
            member = Member(block, position, cell.address, cell.sheet, formula, form, coarse, names)
            by_position.setdefault(position, []).append(member)
    return {p: ms for p, ms in by_position.items() if len({m.block.index for m in ms}) > 1}


def _finding(
    context: WorkbookContext, member: Member, severity: Severity, message: str, fix: str
) -> Finding:
    reached = reached_cells(member.block.spec, member.cell, context.parsed)
    return Finding(
        check=CHECK,
        kind="copied-block",
        severity=severity,
        cells=[member.cell] + [c for c in reached if c != member.cell],
        message=message,
        evidence={"block": member.block.name, "formula": member.formula},
        fix=fix,
    )


def _severity(context: WorkbookContext, member: Member) -> Severity:
    reached = reached_cells(member.block.spec, member.cell, context.parsed)
    return severity_in_result(member.block.result, reached)


class _Owners:
    """The blocks of a sibling group indexed by the sheet of their data and of their results, so
    that finding which sibling a reference points into does not try every block for every
    reference of every member (quadratic in the number of blocks)."""

    def __init__(self, group: list[Block]) -> None:
        self.order = {id(block): index for index, block in enumerate(group)}
        self.data: dict[str, list[Block]] = {}
        self.results: dict[str, list[tuple[int, int, Block]]] = {}
        for block in group:
            self.data.setdefault(block.data_sheet.lower(), []).append(block)
            for stat in block.spec.stats.values():
                cell = stat.cell
                self.results.setdefault(cell.sheet.lower(), []).append((cell.row, cell.col, block))

    def first_other(self, own: Block, box: tuple[str, int, int, int, int]) -> Block | None:
        """The first block of the group, other than ``own``, owning data or results in box."""
        sheet, r1, c1, r2, c2 = box
        found = [b for b in self.data.get(sheet.lower(), []) if b is not own and b.owns_data(*box)]
        found += [
            block
            for row, col, block in self.results.get(sheet.lower(), [])
            if block is not own and r1 <= row <= r2 and c1 <= col <= c2
        ]
        return min(found, key=lambda block: self.order[id(block)]) if found else None


def _points_back(member: Member, owners: _Owners) -> tuple[Reference, Block] | None:
    """The first reference of the member's formula into another sibling's data or results."""
    own = member.block
    for ref in member.references():
        target = placed(ref, own, member.sheet)[1]
        if target is None:
            continue
        box = (target.sheet, target.r1, target.c1, target.r2, target.c2)
        if own.owns_data(*box) or own.owns_result(*box):
            continue
        other = owners.first_other(own, box)
        if other is not None:
            return ref, other
    return None


@check(
    CHECK,
    "A cell of a copied block differs from the same cell of its sibling blocks, or still "
    "points at another block.",
    scope="workbook",
)
def sibling_formula_differs(context: WorkbookContext) -> list[Finding]:
    """Blocks copied for several instruments, sites or runs must differ only in their data.

    Failing: three photometer blocks where PH-3's ``=H16/SQRT(DEVSQ($D$3:$D$12))`` still
    divides by PH-2's x spread; six line sheets where Line 1's p-value is ``=TDIST(…,1)`` and
    the five others' ``=T.DIST.2T(…)``; PH-2's ``=STEYX($E$3:$E$12,$D$3:$D$12)`` anchored on its
    own data while PH-1 writes ``=STEYX(B3:B12,A3:A12)`` (minor: the next copy will point back).
    Passing: every block's formulas read, relative to its own table, the same; or a cell
    spells the same statistic otherwise and gives the same number (``=TDIST(ABS(E11),E9,2)``
    beside siblings' ``=T.DIST.2T(ABS(E11),E9)``; ``=INDEX(LINEST(y,x),1,2)`` beside
    ``=INTERCEPT(y,x)``).
    """
    covered = {
        use.cell.address
        for spec in context.specs
        for use in spec.uses
        if (use.x, use.y) != (spec.x, spec.y)
    }
    findings: list[Finding] = []
    for group in workbook_blocks(context)[1]:
        reported: set[str] = set()
        members = _members(group, covered, _names(context))
        owners = _Owners(group)
        for position_members in members.values():
            for member in position_members:
                back = _points_back(member, owners)
                if back is None:
                    continue
                ref, other = back
                reported.add(member.cell)
                fix = repoint(member.formula, member.sheet, other, member.block)
                findings.append(
                    _finding(
                        context,
                        member,
                        _severity(context, member),
                        f"{member.cell}, in {member.block.name}, uses {a1_text(ref)}, which "
                        f"belongs to its sibling, {other.name}: {member.formula}. The block was "
                        "copied and this reference still points back.",
                        f"Point it at this block's own data: {fix}",
                    )
                )
        for position_members in members.values():
            findings += _breaks(context, position_members, reported)
        for position_members in members.values():
            findings += _anchoring(context, position_members, reported)
    return findings


def _pattern(members: list[Member]) -> str | None:
    """The form most siblings share, if at least two do and no other form is as common: with
    two blocks that differ, or every block different, there is no pattern to break."""
    ranked = Counter(m.form for m in members).most_common()
    if ranked[0][1] < 2 or (len(ranked) > 1 and ranked[1][1] == ranked[0][1]):
        return None
    return ranked[0][0]


def _breaks(context: WorkbookContext, members: list[Member], reported: set[str]) -> list[Finding]:
    live = [m for m in members if m.cell not in reported]
    if len({m.form for m in live}) < 2:
        return []
    pattern = _pattern(live)
    if pattern is None:
        return []
    model = next(m for m in live if m.form == pattern)
    holders = [m.cell for m in live if m.form == pattern and m is not model]
    out = []
    for member in live:
        if member.form == pattern or member.coarse == model.coarse:
            continue  # the same formula over other rows of its own data: ranges-disagree's
        fixed = translate(model.formula, model.block, model.sheet, member.block)
        if computes_the_same(context.evaluator, member.cell, fixed, member.formula):
            continue  # another spelling of the same statistic (TDIST(…,2) and T.DIST.2T(…))
        reported.add(member.cell)
        also = ", ".join(holders[:3]) + ("…" if len(holders) > 3 else "")
        also = f" (so do {also})" if also else ""
        out.append(
            _finding(
                context,
                member,
                _severity(context, member),
                f"{member.cell}, in {member.block.name}, does not follow its sibling blocks: here "
                f"{member.formula}, while {model.cell} computes {model.formula} on its own "
                f"data{also}.",
                f"If the blocks are meant to compute the same statistic, use {fixed}.",
            )
        )
    return out


def _anchors(member: Member) -> list[bool]:
    """For each reference written into the block's own data: is it anchored with $? (A defined
    name is absolute by nature and names what it means: it is not counted.)"""
    return [
        ref.anchored
        for ref in references(member.formula)
        if frame_of(ref, member.block, member.sheet) == "data"
    ]


def _anchoring(
    context: WorkbookContext, members: list[Member], reported: set[str]
) -> list[Finding]:
    live = [m for m in members if m.cell not in reported]
    anchors = {id(m): _anchors(m) for m in live}  # each member's formula read once
    relative = [m for m in live if anchors[id(m)] and not any(anchors[id(m)])]
    if not relative:
        return []
    out = []
    for member in live:
        if not any(anchors[id(member)]):
            continue
        same_sheet = [
            b
            for b in {m.block.index: m.block for m in live}.values()
            if b is not member.block and b.sheet.lower() == member.block.sheet.lower()
        ]
        if not same_sheet:
            continue  # copies on other sheets: an anchor moves with the sheet copy
        reported.add(member.cell)
        model = relative[0]
        out.append(
            _finding(
                context,
                member,
                "minor",
                f"{member.cell}, in {member.block.name}, anchors its data with $: "
                f"{member.formula}, while {model.cell}, in {model.block.name}, uses relative "
                "references. It reads this block's own data, but a copy of the block will keep "
                "reading these cells.",
                f"Use relative references: "
                f"{translate(model.formula, model.block, model.sheet, member.block)}",
            )
        )
    return out
