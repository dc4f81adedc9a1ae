"""One parse of a formula text serves every sheet it is written on, when the text names no sheet.

The same text is written on many sheets (``=SLOPE(B3:B502,A3:A502)`` on each of ten sensors'
sheets, and in each of two hundred workbooks of one kind). When its parse read nothing of the
workbook but the name of the formula's own sheet (no sheet prefix, no whole column or row, whose
extent is the sheet's, no defined name or table reference), the tree on another sheet is the same
tree with that sheet's name in every reference: :func:`rebind` writes it, in a fraction of the
time a parse takes. The parser marks a context ``portable`` while it reads nothing else.
"""

from __future__ import annotations

from dataclasses import dataclass

from auditor.formula.nodes import (
    ArrayNode,
    Binary,
    Call,
    Node,
    Percent,
    Ref,
    RefNode,
    Unary,
    children,
)

MAX_TEMPLATES = 2048  # texts kept at most
MAX_TEXT = 512  # characters: a longer text's tree is not kept past its workbook (memory)


@dataclass(frozen=True)
class Template:
    """A tree parsed on ``sheet`` (the workbook's spelling), every reference on that sheet."""

    sheet: str
    node: Node


# Parses with a workbook, and without one (names stay names, whole columns reach the grid's
# end): the two give different trees of one text, so each has its own templates. A plain dict,
# emptied when full: a sheet of formulas that differ cell by cell (=D4-B4*$F$4 down a column)
# keeps a template per cell, and that must cost next to nothing.
_TEMPLATES: dict[bool, dict[str, Template]] = {True: {}, False: {}}


def template(text: str, in_book: bool = True) -> Template | None:
    return _TEMPLATES[in_book].get(text)


def keep(text: str, sheet: str, node: Node, in_book: bool = True) -> None:
    """Remember a portable parse of ``text`` on ``sheet`` (all are let go past the limit)."""
    if len(text) > MAX_TEXT:
        return
    kept = _TEMPLATES[in_book]
    if len(kept) >= MAX_TEMPLATES:
        kept.clear()
    kept[text] = Template(sheet, node)


def clear() -> None:
    for kept in _TEMPLATES.values():
        kept.clear()


def _rebuilt(node: Node, parts: list[Node], sheet: str) -> Node:
    if isinstance(node, RefNode):
        ref = node.ref  # written out: dataclasses.replace looks the fields up each time
        return RefNode(
            Ref(
                sheet, ref.r1, ref.c1, ref.r2, ref.c2, ref.whole_column, ref.external, ref.whole_row
            )
        )
    if isinstance(node, Call):
        return Call(node.name, tuple(parts))
    if isinstance(node, Binary):
        return Binary(node.op, parts[0], parts[1])
    if isinstance(node, Unary):
        return Unary(node.op, parts[0])
    if isinstance(node, Percent):
        return Percent(parts[0])
    if isinstance(node, ArrayNode):
        width = len(node.rows[0]) if node.rows else 0
        rows = [tuple(parts[i : i + width]) for i in range(0, len(parts), width)] if width else []
        return ArrayNode(tuple(rows))
    return node  # a literal, a name left as written, an empty argument: no sheet in it


def rebind(found: Template, sheet: str) -> Node:
    """The template's tree as parsed on ``sheet``: the very tree on its own sheet, else a copy
    with ``sheet`` in every reference (children before parents, from an explicit stack: a chain
    of a thousand additions nests a thousand deep)."""
    if sheet == found.sheet:
        return found.node
    made: dict[int, Node] = {}
    stack: list[tuple[Node, bool]] = [(found.node, False)]
    while stack:
        node, ready = stack.pop()
        parts = children(node)
        if ready or not parts:
            made[id(node)] = _rebuilt(node, [made[id(part)] for part in parts], sheet)
            continue
        stack.append((node, True))
        stack.extend((part, False) for part in parts)
    return made[id(found.node)]
