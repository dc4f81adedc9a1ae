"""The syntax tree of a formula: references, literals, calls and operators, and walks over it."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

from auditor.grid import MAX_COL, MAX_ROW, column_letter

SHEET_ROWS = MAX_ROW  # whole columns reach the grid's end when no workbook is known
SHEET_COLS = MAX_COL


@dataclass(frozen=True)
class Ref:
    """A rectangular block of cells on one sheet (rows and columns 1-based, inclusive)."""

    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    whole_column: bool = False
    external: str | None = None  # "[1]" or "[other.xlsx]": a block in another workbook
    whole_row: bool = False

    @property
    def is_cell(self) -> bool:
        return self.r1 == self.r2 and self.c1 == self.c2

    @property
    def rows(self) -> int:
        return self.r2 - self.r1 + 1

    @property
    def cols(self) -> int:
        return self.c2 - self.c1 + 1

    @property
    def address(self) -> str:
        start = f"{column_letter(self.c1)}{self.r1}"
        end = f"{column_letter(self.c2)}{self.r2}"
        span = start if self.is_cell else f"{start}:{end}"
        return f"{self.external or ''}{self.sheet}!{span}"


@dataclass(frozen=True)
class Number:
    value: float


@dataclass(frozen=True)
class Text:
    value: str


@dataclass(frozen=True)
class Bool:
    value: bool


@dataclass(frozen=True)
class ErrorLit:
    code: str


@dataclass(frozen=True)
class Missing:
    """An argument left empty, as in ``LINEST(y, x, , TRUE)``."""


@dataclass(frozen=True)
class RefNode:
    ref: Ref


@dataclass(frozen=True)
class NameNode:
    """A name that could not be resolved: undefined, a structured table reference, or external."""

    name: str
    external: str | None = None


@dataclass(frozen=True)
class Call:
    name: str  # upper case, without the _xlfn. / _xlws. storage prefixes
    args: tuple[Node, ...]


@dataclass(frozen=True)
class Unary:
    op: str  # "-" or "+"
    operand: Node


@dataclass(frozen=True)
class Binary:
    op: str  # + - * / ^ & = <> < <= > >= and ":" (range), " " (intersection), "," (union)
    left: Node
    right: Node


@dataclass(frozen=True)
class Percent:
    operand: Node


@dataclass(frozen=True)
class ArrayNode:
    """An array constant such as ``{1,2;3,4}``: rows of element nodes."""

    rows: tuple[tuple[Node, ...], ...]


Node = (
    Number | Text | Bool | ErrorLit | Missing | RefNode | NameNode | Call | Unary | Binary | Percent
) | ArrayNode


def children(node: Node) -> tuple[Node, ...]:
    if isinstance(node, Call):
        return node.args
    if isinstance(node, Unary | Percent):
        return (node.operand,)
    if isinstance(node, Binary):
        return (node.left, node.right)
    if isinstance(node, ArrayNode):
        return tuple(item for row in node.rows for item in row)
    return ()


def _push_children(stack: list[Node], node: Node) -> None:
    """Put ``node``'s children on ``stack`` so that the first is popped first."""
    kind = type(node)
    if kind is Call:
        stack.extend(reversed(node.args))  # type: ignore[union-attr]
    elif kind is Binary:
        stack.append(node.right)  # type: ignore[union-attr]
        stack.append(node.left)  # type: ignore[union-attr]
    elif kind is Unary or kind is Percent:
        stack.append(node.operand)  # type: ignore[union-attr]
    elif kind is ArrayNode:
        stack.extend(reversed(children(node)))


def walk(node: Node) -> Iterator[Node]:
    """Every node, depth-first, a parent before its children (iterative: trees can be deep)."""
    stack = [node]
    while stack:
        current = stack.pop()
        yield current
        _push_children(stack, current)


def gather(node: Node, kind: type) -> list[Node]:
    """The nodes of one kind, in the order ``walk`` meets them (one loop, no generator: these
    are asked for thousands of times per workbook)."""
    found: list[Node] = []
    stack = [node]
    while stack:
        current = stack.pop()
        if type(current) is kind:
            found.append(current)
        _push_children(stack, current)
    return found


# The references of each tree asked for are kept on the tree itself, in an attribute that is
# not a field (equality, hashing and the printed form ignore it): a parsed formula is one
# shared tree (auditor.formula.syntax caches them), and the locator, the evaluator and the
# checks each ask for its references. They go with the tree.
_KEPT = "_references"


def references(node: Node) -> list[Ref]:
    """Every reference of the tree, in the order ``walk`` meets them (a list of its own)."""
    found: tuple[Ref, ...] | None = node.__dict__.get(_KEPT)
    if found is None:
        found = tuple(n.ref for n in gather(node, RefNode))  # type: ignore[union-attr]
        object.__setattr__(node, _KEPT, found)
    return list(found)


def remember_references(node: Node, found: tuple[Ref, ...]) -> None:
    """Keep ``found`` as the references of the tree ``node``, in the order ``walk`` meets them
    (its maker may know them without a walk: auditor.formula.moved)."""
    object.__setattr__(node, _KEPT, found)


_SHAPE = "_moved_from"


def moved_from(node: Node) -> object | None:
    """What a tree moved from a shared anchor (auditor.formula.moved) was made by: trees with
    the same maker differ only in their references' rows and columns, so anything found from
    the rest of the tree (its literals, its calls' names) is the same for all of them. None
    for any other tree."""
    return node.__dict__.get(_SHAPE)


def remember_moved_from(node: Node, maker: object) -> None:
    object.__setattr__(node, _SHAPE, maker)


def calls(node: Node) -> list[Call]:
    return gather(node, Call)  # type: ignore[return-value]
