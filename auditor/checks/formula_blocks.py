"""Sibling blocks: the same statistics block copied for several instruments, sites or runs.

Two regressions are siblings when their statistic cells have the same shape: the same statistics
at the same offsets from the block's top-left statistic cell, on one sheet or across sheets.
Their formulas are then compared cell by cell in a *frame form*: every reference is written
relative to the frame it belongs to, so that copies agree even where a plain R1C1 text would
not (a results sheet whose blocks read tables on other sheets):

* a reference into the regression's own data columns, relative to its data table (start rows
  from the table's first row, end rows from its last, so blocks of 8 and 10 points agree);
* any other reference on the block's sheet, relative to the block's top-left statistic cell;
* anything else (another sheet, another workbook) as it is written, absolute.

``$`` signs are left out of the frame form: where a reference points is what must agree; how it
is anchored is judged separately (an anchored reference is how a copy keeps pointing back).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property, partial

from auditor.context import WorkbookContext
from auditor.formula.operands import Corner, Reference
from auditor.formula.r1c1 import canonical, rewrite_references
from auditor.formula.syntax import Ref
from auditor.grid import column_letter
from auditor.locate.locator import RegressionSpec, StatCell
from auditor.model import RegressionResult, stat_base

Position = tuple[str, int, int]  # (statistic, rows below the block's top, columns right of it)
MIN_SHARED = 3  # statistics two blocks must share at the same offsets to be siblings
MIN_SHARE = 0.6  # ... and the share of the larger block's statistics they must make up


@dataclass
class Block:
    """One regression's statistics block, with the frames its references are read in."""

    index: int  # position in the workbook's list of regressions
    spec: RegressionSpec
    result: RegressionResult
    sheet: str
    top: tuple[int, int]
    cells: dict[Position, StatCell] = field(default_factory=dict)

    @property
    def data_sheet(self) -> str:
        return self.spec.y.sheet

    @cached_property  # asked for every reference of every member; the ranges do not change
    def data_box(self) -> tuple[int, int, int, int]:
        """(first row, first column, last row, last column) of the x and y ranges together."""
        x, y = self.spec.x, self.spec.y
        return min(x.r1, y.r1), min(x.c1, y.c1), max(x.r2, y.r2), max(x.c2, y.c2)

    title: str = ""  # the block's own title where it is unique in the workbook, else its place
    # Each reference's frame and target, found once: the sibling check reads a member's
    # references for both frame forms, its links into siblings and its anchors. Kept by the
    # reference object (references are kept per text, auditor.formula.operands.parse_a1), which
    # is held in the entry so that its id stays its own: hashing a reference's corners on every
    # look-up cost more than placing it.
    frames: dict[tuple[int, str], tuple[Reference, str, Ref | None]] = field(
        default_factory=dict, repr=False, compare=False
    )

    @property
    def name(self) -> str:
        """How a message names the block: its own title, or where it is."""
        return self.title or self.spec.id

    def owns_data(self, sheet: str, r1: int, c1: int, r2: int, c2: int) -> bool:
        fr1, fc1, fr2, fc2 = self.data_box
        return (
            sheet.lower() == self.data_sheet.lower()
            and c1 >= fc1
            and c2 <= fc2
            and r1 <= fr2 + 1
            and r2 >= fr1 - 1
        )

    def owns_result(self, sheet: str, r1: int, c1: int, r2: int, c2: int) -> bool:
        return any(
            stat.cell.sheet.lower() == sheet.lower()
            and r1 <= stat.cell.row <= r2
            and c1 <= stat.cell.col <= c2
            for stat in self.spec.stats.values()
        )


def blocks_of(specs: list[RegressionSpec], results: list[RegressionResult]) -> list[Block]:
    blocks = []
    for index, (spec, result) in enumerate(zip(specs, results, strict=True)):
        on_sheet = [
            s
            for s in spec.stats.values()
            if s.cell.sheet.lower() == spec.sheet.lower()
            and (s.how != "linest-block" or s.block_position == (0, 0))
        ]
        if not on_sheet:
            continue
        top = (min(s.cell.row for s in on_sheet), min(s.cell.col for s in on_sheet))
        block = Block(index, spec, result, spec.sheet, top)
        for stat in on_sheet:
            position = (stat_base(stat.key), stat.cell.row - top[0], stat.cell.col - top[1])
            block.cells.setdefault(position, stat)
        blocks.append(block)
    titles = [b.spec.label for b in blocks]
    for block in blocks:
        place = f"{block.sheet}!{column_letter(block.top[1])}{block.top[0]}"
        label = block.spec.label
        unique = label and titles.count(label) == 1
        block.title = f"block '{label}' ({place})" if unique else f"the block at {place}"
    return blocks


def sibling_groups(blocks: list[Block]) -> list[list[Block]]:
    """Blocks of the same shape, grouped (each group has two or more, in workbook order)."""
    parent = list(range(len(blocks)))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i, a in enumerate(blocks):
        for j in range(i):
            b = blocks[j]
            if a.spec.x_columns != b.spec.x_columns or a.spec.intercept != b.spec.intercept:
                continue
            shared = len(set(a.cells) & set(b.cells))
            if shared >= MIN_SHARED and shared >= MIN_SHARE * max(len(a.cells), len(b.cells)):
                parent[find(i)] = find(j)
    groups: dict[int, list[Block]] = {}
    for i, block in enumerate(blocks):
        groups.setdefault(find(i), []).append(block)
    return [g for g in groups.values() if len(g) > 1]


def workbook_blocks(context: WorkbookContext) -> tuple[list[Block], list[list[Block]]]:
    """The workbook's statistics blocks and their sibling groups, found once and carried on
    the context (the pasted-value check and the sibling check both read them)."""
    if context.blocks is None:
        blocks = blocks_of(context.specs, context.results)
        context.blocks = (blocks, sibling_groups(blocks))
    found: tuple[list[Block], list[list[Block]]] = context.blocks
    return found


def resolve(ref: Reference, block: Block, cell_sheet: str) -> Ref | None:
    """The grid block a reference names (whole columns to the data's last row)."""
    if ref.external is not None:
        return None
    sheet = ref.sheet or cell_sheet
    rows = [c.row for c in ref.corners if c.row is not None]
    cols = [c.col for c in ref.corners if c.col is not None]
    last_row = block.data_box[2]
    r1, r2 = (min(rows), max(rows)) if rows else (1, last_row)
    c1, c2 = (min(cols), max(cols)) if cols else (1, 16_384)
    return Ref(sheet, r1, c1, r2, c2)


def placed(ref: Reference, block: Block, cell_sheet: str) -> tuple[str, Ref | None]:
    """The frame a reference is read in ('data', 'block' or 'other', see the module doc) and
    the grid block it names (:func:`resolve`), kept on the block after the first time."""
    key = (id(ref), cell_sheet)
    found = block.frames.get(key)
    if found is None or found[0] is not ref:
        target = resolve(ref, block, cell_sheet)
        if target is None:
            frame = "other"
        elif block.owns_data(target.sheet, target.r1, target.c1, target.r2, target.c2):
            frame = "data"
        else:
            frame = "block" if target.sheet.lower() == block.sheet.lower() else "other"
        found = block.frames[key] = (ref, frame, target)
    return found[1], found[2]


def frame_of(ref: Reference, block: Block, cell_sheet: str) -> str:
    """'data', 'block' or 'other': which frame a reference is read in (see the module doc)."""
    return placed(ref, block, cell_sheet)[0]


def _corner_form(corner: Corner, origin: tuple[int, int], tag: str) -> str:
    row = "" if corner.row is None else f"{tag}{corner.row - origin[0]}"
    col = "" if corner.col is None else f"c{corner.col - origin[1]}"
    return row + col


def _is(target: Ref, meant: Ref) -> bool:
    return (
        target.sheet.lower() == meant.sheet.lower()
        and (target.c1, target.c2) == (meant.c1, meant.c2)
        and (target.r1, target.r2) == (meant.r1, meant.r2)
    )


def frame_text(ref: Reference, block: Block, cell_sheet: str, coarse: bool = False) -> str:
    """One reference in frame form; ``coarse`` writes every reference into the block's own data
    as ``{data}``, so that two forms compare equal when they differ only in which of its own
    rows a formula reads (a range fault of the regression, not of the copy)."""
    frame, target = placed(ref, block, cell_sheet)
    if frame == "data" and coarse:
        return "{data}"
    return _framed(ref, block, cell_sheet, frame, target)


def _framed(ref: Reference, block: Block, cell_sheet: str, frame: str, target: Ref | None) -> str:
    """The fine frame form of a reference already placed (:func:`frame_text`)."""
    fr1, fc1, fr2, _ = block.data_box
    if frame == "data":
        if target is not None and _is(target, block.spec.x):
            return "{x}"
        if target is not None and _is(target, block.spec.y):
            return "{y}"
        start = _corner_form(ref.start, (fr1, fc1), "s")
        end = "" if ref.end is None else ":" + _corner_form(ref.end, (fr2, fc1), "e")
        return "{data " + start + end + "}"
    if frame == "block":
        start = _corner_form(ref.start, block.top, "r")
        end = "" if ref.end is None else ":" + _corner_form(ref.end, block.top, "r")
        return "{block " + start + end + "}"
    plain = Reference(ref.prefix or f"'{cell_sheet}'!", _bare(ref.start), _bare_opt(ref.end))
    return a1_as_written(plain).upper()


def _bare(corner: Corner) -> Corner:
    return Corner(corner.row, corner.col)


def _bare_opt(corner: Corner | None) -> Corner | None:
    return None if corner is None else _bare(corner)


def a1_as_written(ref: Reference) -> str:
    """A reference in A1 with its prefix and ``$`` signs."""

    def one(c: Corner) -> str:
        col = "" if c.col is None else ("$" if c.col_absolute else "") + column_letter(c.col)
        row = "" if c.row is None else ("$" if c.row_absolute else "") + str(c.row)
        return col + row

    return ref.prefix + one(ref.start) + ("" if ref.end is None else ":" + one(ref.end))


Names = Callable[[str, str], str | None]  # (name, sheet) -> the reference it stands for


def no_names(_name: str, _sheet: str) -> str | None:
    return None


def frame_form(
    formula: str, block: Block, cell_sheet: str, coarse: bool = False, names: Names = no_names
) -> str:
    """The formula with spelling normalised, defined names replaced by what they refer to, and
    each reference in its frame (module doc)."""
    return rewrite_references(
        canonical(formula),
        partial(frame_text, block=block, cell_sheet=cell_sheet, coarse=coarse),
        expand=lambda operand: names(operand, cell_sheet),
    )


_MARK = "\x00"  # never in a formula read from a file (XML cannot hold it): a reference's place


def frame_forms(formula: str, block: Block, cell_sheet: str, names: Names = no_names) -> list[str]:
    """:func:`frame_form` fine and coarse, from one pass over the formula: each reference's
    place is marked and the reference placed once, then each form fills the marks."""
    if _MARK in formula:  # made by hand, not read: the plain way, form by form
        return [frame_form(formula, block, cell_sheet, each, names) for each in (False, True)]
    found: list[Reference] = []

    def mark(ref: Reference) -> str:
        found.append(ref)
        return f"{_MARK}{len(found) - 1}{_MARK}"

    pieces = rewrite_references(
        canonical(formula), mark, expand=lambda operand: names(operand, cell_sheet)
    ).split(_MARK)
    fine, coarse = [], []
    for ref in found:
        frame, target = placed(ref, block, cell_sheet)
        fine.append(_framed(ref, block, cell_sheet, frame, target))
        coarse.append("{data}" if frame == "data" else fine[-1])
    forms = []
    for texts in (fine, coarse):
        filled = list(pieces)
        filled[1::2] = [texts[int(index)] for index in pieces[1::2]]
        forms.append("".join(filled))
    return forms
