"""One parse of a shared formula's anchor, moved to every cell of its group.

A column filled down from ``=B2*2+SUM($B$2:B2)`` holds a different text in each cell, but each
text is the anchor's with its relative rows and columns moved: the same tokens in the same order,
only the references' numbers differ. The parser's tree depends on the tokens' kinds and on the
text of each token that is not a reference; a reference token becomes a node of its own. So a
cell's tree is the anchor's tree with the node of each moving reference replaced.

:class:`MovedTree` keeps the anchor's tree and, for each reference that moves, its corners (a
number and whether it moves, per row and column); :meth:`MovedTree.at` builds a cell's tree by
replaying a short program over the parts that change (a subtree with no moving reference is the
anchor's own object, as a parse cache would share it). Which references may be moved this way,
and the proof that the result is the parse of the cell's text, belong to the caller
(:mod:`auditor.locate.shared_parse`): each moving reference must be a plain block of cells.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from auditor.formula.nodes import (
    Binary,
    Call,
    Node,
    Percent,
    Ref,
    RefNode,
    Unary,
    children,
    gather,
    remember_moved_from,
    remember_references,
)
from auditor.formula.parser import _Context, _parse_now

if TYPE_CHECKING:
    from collections.abc import Sequence

    from openpyxl.formula.tokenizer import Token

    from auditor.read.workbook import Workbook

# A corner of a block: (row, row moves, column, column moves).
Corner = tuple[int, bool, int, bool]

_CONST, _REF, _CALL, _BINARY, _UNARY, _PERCENT = range(6)
# (kind, payload, count of parts it takes); the payload is by kind a node, a moving reference's
# index, a function's name or an operator (None for a percent).
_Op = tuple[int, Any, int]


def parse_with_refs(
    text: str, sheet: str, workbook: Workbook | None, given: Sequence[Token]
) -> tuple[Node, list[Node]]:
    """A fresh parse (no cache) of ``text`` from its tokens ``given``, and the node each
    reference token became, in the order of the tokens. Raises FormulaError as parse does."""
    ctx = _Context(text, sheet, workbook, given=given, refs=[])
    node = _parse_now(ctx)
    return node, ctx.refs or []


@dataclass(frozen=True)
class MovingRef:
    """A reference of the anchor that moves: its node in the anchor's tree and its corners."""

    node: RefNode
    corners: tuple[Corner, ...]


class MovedTree:
    """The anchor's tree ``node``; :meth:`at` gives it moved by a row and column offset."""

    def __init__(self, node: Node, moving: list[MovingRef]) -> None:
        self.node = node
        self.moving = moving
        index = {id(m.node): k for k, m in enumerate(moving)}
        self.program = _compile(node, index)
        # The tree's references in the order walk meets them: a fixed one as it is, a moving
        # one by its number (nodes.references, known without a walk of each moved tree).
        self.slots: list[Ref | int] = [
            index[id(found)] if id(found) in index else found.ref  # type: ignore[union-attr]
            for found in gather(node, RefNode)
        ]

    def at(self, row_delta: int, col_delta: int) -> Node:
        """The tree moved by the offset; it carries its references (``nodes.references``) and
        names this maker (``nodes.moved_from``): the trees of one maker differ only in the
        rows and columns of their references."""
        values: list[Node] = []
        moved: list[Any] = [None] * len(self.moving)  # each moving reference's new node
        for kind, payload, count in self.program:
            if kind == _CONST:
                values.append(payload)
            elif kind == _REF:
                made = moved[payload] = _moved(self.moving[payload], row_delta, col_delta)
                values.append(made)
            else:
                parts = values[-count:]
                del values[-count:]
                values.append(_made(kind, payload, parts))
        node = values[0]
        slots = self.slots
        remember_moved_from(node, self)
        remember_references(node, tuple(moved[s].ref if isinstance(s, int) else s for s in slots))
        return node


def _moved(moving: MovingRef, row_delta: int, col_delta: int) -> RefNode:
    """The reference's block with each moving row and column moved, as the parser spans it
    (the least and greatest row and column of its corners; one cell and two corners, the
    usual references, without the lists)."""
    ref = moving.node.ref
    corners = moving.corners
    if len(corners) == 1:
        row, row_moves, col, col_moves = corners[0]
        row += row_delta if row_moves else 0
        col += col_delta if col_moves else 0
        return RefNode(Ref(ref.sheet, row, col, row, col, False, ref.external))
    if len(corners) == 2:
        (row_a, moves_a, col_a, across_a), (row_b, moves_b, col_b, across_b) = corners
        row_a += row_delta if moves_a else 0
        row_b += row_delta if moves_b else 0
        col_a += col_delta if across_a else 0
        col_b += col_delta if across_b else 0
        r1, r2 = (row_a, row_b) if row_a <= row_b else (row_b, row_a)
        c1, c2 = (col_a, col_b) if col_a <= col_b else (col_b, col_a)
        return RefNode(Ref(ref.sheet, r1, c1, r2, c2, False, ref.external))
    rows = [row + row_delta if moves else row for row, moves, _, _ in corners]
    cols = [col + col_delta if moves else col for _, _, col, moves in corners]
    return RefNode(Ref(ref.sheet, min(rows), min(cols), max(rows), max(cols), False, ref.external))


def _made(kind: int, payload: Any, parts: list[Node]) -> Node:
    if kind == _CALL:
        return Call(payload, tuple(parts))
    if kind == _BINARY:
        return Binary(payload, parts[0], parts[1])
    if kind == _UNARY:
        return Unary(payload, parts[0])
    return Percent(parts[0])


def _operation(node: Node, count: int) -> _Op:
    """The step that builds ``node`` from its ``count`` parts, the last values made."""
    if isinstance(node, Call):
        return (_CALL, node.name, count)
    if isinstance(node, Binary):
        return (_BINARY, node.op, count)
    if isinstance(node, Unary):
        return (_UNARY, node.op, count)
    return (_PERCENT, None, count)  # an array constant holds no reference: never rebuilt


def _compile(root: Node, moving: dict[int, int]) -> list[_Op]:
    """Steps that build the tree in post-order: a subtree holding no moving reference is one
    constant step, a moving reference takes its moved node, any other node is built from its
    parts (explicit stacks: a chain of a thousand additions nests a thousand deep)."""
    dirty: set[int] = set()
    stack: list[tuple[Node, bool]] = [(root, False)]
    while stack:
        node, ready = stack.pop()
        parts = children(node)
        if ready:
            if any(id(part) in dirty for part in parts):
                dirty.add(id(node))
            continue
        if id(node) in moving:
            dirty.add(id(node))
            continue
        stack.append((node, True))
        stack.extend((part, False) for part in parts)
    program: list[_Op] = []
    stack = [(root, False)]
    while stack:
        node, ready = stack.pop()
        if ready:
            program.append(_operation(node, len(children(node))))
        elif id(node) in moving:
            program.append((_REF, moving[id(node)], 0))
        elif id(node) not in dirty:
            program.append((_CONST, node, 0))
        else:
            stack.append((node, True))
            stack.extend((part, False) for part in reversed(children(node)))
    return program
