"""Formula text -> a small syntax tree of calls, references and operators.

Built on openpyxl's :class:`~openpyxl.formula.tokenizer.Tokenizer`, which splits the text but
leaves references whole (``'My Data'!$B$2:$B$9``) and knows nothing of precedence. This module
splits what the tokenizer glues together, resolves defined names against the workbook and builds
the tree with the spreadsheet's operator precedence (binding tightest first)::

    :  (range)   ' ' (intersection)   - + (prefix)   %   ^   * /   + -   &   = <> < <= > >=

Unary minus binds tighter than ``^`` (``=-2^2`` is 4) and ``^`` is left-associative, as in the
spreadsheet applications. Whole columns (``A:A``) become explicit row spans ending at the sheet's
last used row, so that no reader of the tree sees a million-row reference.
"""

from __future__ import annotations

import re
import weakref
from collections.abc import Iterator
from dataclasses import dataclass
from functools import lru_cache
from typing import TYPE_CHECKING

from openpyxl.formula.tokenizer import Tokenizer, TokenizerError

from auditor.errors import FormulaError
from auditor.workbook import column_index, column_letter

if TYPE_CHECKING:
    from auditor.workbook import Workbook

SHEET_ROWS = 1_048_576  # the xlsx grid; used for whole columns when no workbook is known
SHEET_COLS = 16_384


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


def walk(node: Node) -> Iterator[Node]:
    """Every node, depth-first, a parent before its children (iterative: trees can be deep)."""
    stack = [node]
    while stack:
        current = stack.pop()
        yield current
        stack.extend(reversed(children(current)))


def references(node: Node) -> list[Ref]:
    return [n.ref for n in walk(node) if isinstance(n, RefNode)]


def calls(node: Node) -> list[Call]:
    return [n for n in walk(node) if isinstance(n, Call)]


# --- tokens -------------------------------------------------------------------------------------

# Binding powers (left, right) of the infix operators; right = left + 1 makes them left-assoc.
_INFIX = {
    ",": (1, 2),
    "=": (10, 11),
    "<>": (10, 11),
    "<": (10, 11),
    "<=": (10, 11),
    ">": (10, 11),
    ">=": (10, 11),
    "&": (20, 21),
    "+": (30, 31),
    "-": (30, 31),
    "*": (40, 41),
    "/": (40, 41),
    "^": (50, 51),
    " ": (80, 81),
    ":": (90, 91),
}
_PERCENT_BP = 60
_PREFIX_BP = 70
_STORAGE_PREFIXES = ("_XLFN.", "_XLWS.", "_XLUDF.")


@dataclass(frozen=True)
class _Tok:
    kind: str  # NUM TEXT BOOL ERR REF FUNC ( ) , ; { } PREFIX INFIX POSTFIX
    value: str = ""


def _split_outside_quotes(text: str, sep: str) -> list[str]:
    parts, depth_quote, start = [], False, 0
    for i, char in enumerate(text):
        if char == "'":
            depth_quote = not depth_quote  # '' inside a quoted name toggles twice: no effect
        elif char == sep and not depth_quote:
            parts.append(text[start:i])
            start = i + 1
    parts.append(text[start:])
    return parts


def _tokens(text: str) -> list[_Tok]:
    try:
        raw = Tokenizer(text).items
    except (TokenizerError, IndexError, AssertionError, KeyError, ValueError) as exc:
        # The tokenizer signals unbalanced text with several exception types.
        raise FormulaError(f"cannot parse formula {text!r}: {exc}") from exc
    out: list[_Tok] = []
    for item in raw:
        kind, sub, value = item.type, item.subtype, item.value
        if kind == "OPERAND":
            simple = {"NUMBER": "NUM", "TEXT": "TEXT", "LOGICAL": "BOOL", "ERROR": "ERR"}
            out.append(_Tok(simple.get(sub, "REF"), value))
        elif kind == "FUNC" and sub == "OPEN":
            # The tokenizer glues a range operator onto a function: "A1:INDEX(" or ":(".
            head, colon, name = value[:-1].rpartition(":")
            if colon:
                if head:
                    out.append(_Tok("REF", head))
                out.append(_Tok("INFIX", ":"))
            out.append(_Tok("FUNC", name) if name else _Tok("("))
        elif kind in ("FUNC", "PAREN"):
            out.append(_Tok("(" if sub == "OPEN" else ")"))
        elif kind == "ARRAY":
            out.append(_Tok("{" if sub == "OPEN" else "}"))
        elif kind == "SEP":
            out.append(_Tok("," if sub == "ARG" else ";"))
        elif kind == "OPERATOR-PREFIX":
            out.append(_Tok("PREFIX", value))
        elif kind == "OPERATOR-INFIX":
            out.append(_Tok("INFIX", value))
        elif kind == "OPERATOR-POSTFIX":
            out.append(_Tok("POSTFIX", value))
        elif kind == "WHITE-SPACE":
            out.append(_Tok("WS", value))
        else:
            raise FormulaError(f"cannot parse formula {text!r}: unexpected token {value!r}")
    # Whitespace matters only between two operands, where it is the intersection operator.
    ends = {"NUM", "TEXT", "BOOL", "ERR", "REF", ")", "}", "POSTFIX"}
    starts = {"REF", "FUNC", "("}
    cleaned: list[_Tok] = []
    for i, tok in enumerate(out):
        if tok.kind != "WS":
            cleaned.append(tok)
        elif cleaned and cleaned[-1].kind in ends and i + 1 < len(out):
            if out[i + 1].kind in starts:
                cleaned.append(_Tok("INFIX", " "))
    return cleaned


# --- references and names -----------------------------------------------------------------------

_CELL = re.compile(r"^\$?([A-Za-z]{1,3})\$?(\d+)$")
_COLUMN = re.compile(r"^\$?([A-Za-z]{1,3})$")
_ROW = re.compile(r"^\$?(\d+)$")
_NAME_DEPTH_LIMIT = 16


def _split_sheet(part: str) -> tuple[str | None, str]:
    """("'My Data'!$B$2") -> ("'My Data'", "$B$2"): the prefix is cut at the last '!'."""
    pieces = _split_outside_quotes(part, "!")
    if len(pieces) == 1:
        return None, part
    return "!".join(pieces[:-1]), pieces[-1]


def _unquote(prefix: str) -> tuple[str | None, str]:
    """Sheet prefix -> (external workbook marker, sheet name)."""
    if len(prefix) >= 2 and prefix[0] == prefix[-1] == "'":
        prefix = prefix[1:-1].replace("''", "'")
    if "[" in prefix and "]" in prefix:
        cut = prefix.rindex("]") + 1
        return prefix[:cut], prefix[cut:]
    return None, prefix


@dataclass
class _Context:
    text: str
    sheet: str
    workbook: Workbook | None
    depth: int = 0


def _sheet_extent(ctx: _Context, sheet: str) -> tuple[str, int, int]:
    """The workbook's own spelling of a sheet name and its last used row and column."""
    if ctx.workbook is None:
        return sheet, SHEET_ROWS, SHEET_COLS
    found = ctx.workbook.sheet(sheet)
    if found is None:
        return sheet, SHEET_ROWS, SHEET_COLS
    return found.name, max(found.max_row, 1), max(found.max_col, 1)


def _reference(ctx: _Context, text: str) -> Node:
    parts = _split_outside_quotes(text, ":")
    sheet: str | None = None
    external: str | None = None
    bodies: list[str] = []
    for part in parts:
        prefix, body = _split_sheet(part)
        if prefix is not None:
            external, sheet = _unquote(prefix)
        bodies.append(body)
    sheet_name, max_row, max_col = _sheet_extent(ctx, sheet if sheet is not None else ctx.sheet)
    if external is not None:
        sheet_name = sheet or ""
    cells = [_CELL.match(b) for b in bodies]
    if all(cells):
        rows = [int(m.group(2)) for m in cells if m]
        cols = [column_index(m.group(1)) for m in cells if m]
        return RefNode(Ref(sheet_name, min(rows), min(cols), max(rows), max(cols), False, external))
    if len(parts) == 2:
        col_a, col_b = _COLUMN.match(bodies[0]), _COLUMN.match(bodies[1])
        if col_a and col_b:
            c1, c2 = sorted((column_index(col_a.group(1)), column_index(col_b.group(1))))
            return RefNode(Ref(sheet_name, 1, c1, max_row, c2, True, external))
        row_a, row_b = _ROW.match(bodies[0]), _ROW.match(bodies[1])
        if row_a and row_b:
            r1, r2 = sorted((int(row_a.group(1)), int(row_b.group(1))))
            return RefNode(Ref(sheet_name, r1, 1, r2, max_col, False, external, whole_row=True))
    if len(parts) == 1:
        return _name(ctx, bodies[0], sheet, external)
    # "Start:Finish" between two names (or a name and a cell): the range operator applied.
    node = _reference(ctx, parts[0])
    for part in parts[1:]:
        node = Binary(":", node, _reference(ctx, part))
    return node


def _name(ctx: _Context, name: str, sheet: str | None, external: str | None) -> Node:
    if external is not None:
        return NameNode(name, external)
    if "[" in name or ctx.workbook is None:
        return NameNode(name)  # structured table references are left to the caller
    scope = sheet if sheet is not None else ctx.sheet
    refers_to = ctx.workbook.resolve_name(name, scope)
    if refers_to is None or ctx.depth >= _NAME_DEPTH_LIMIT:
        return NameNode(name)  # undefined, or defined in terms of itself
    inner = _Context(f"={refers_to}", scope, ctx.workbook, ctx.depth + 1)
    return _Parser(inner).parse()


# --- the parser ----------------------------------------------------------------------------------


class _Parser:
    def __init__(self, ctx: _Context) -> None:
        self.ctx = ctx
        text = ctx.text if ctx.text.startswith("=") else "=" + ctx.text
        self.toks = _tokens(text)
        self.pos = 0

    def fail(self, why: str) -> FormulaError:
        return FormulaError(f"cannot parse formula {self.ctx.text!r}: {why}")

    def peek(self) -> _Tok | None:
        return self.toks[self.pos] if self.pos < len(self.toks) else None

    def take(self) -> _Tok:
        tok = self.peek()
        if tok is None:
            raise self.fail("it ends too early")
        self.pos += 1
        return tok

    def expect(self, kind: str) -> None:
        tok = self.take()
        if tok.kind != kind:
            raise self.fail(f"expected {kind!r}, found {tok.value or tok.kind!r}")

    def parse(self) -> Node:
        if not self.toks:
            raise self.fail("it is empty")
        node = self.expression(0)
        if self.peek() is not None:
            raise self.fail(f"unexpected {self.take().value or self.toks[self.pos - 1].kind!r}")
        return node

    def expression(self, min_bp: int) -> Node:
        left = self.prefix()
        while (tok := self.peek()) is not None:
            if tok.kind == "POSTFIX" and tok.value == "%":
                if _PERCENT_BP < min_bp:
                    break
                self.pos += 1
                left = Percent(left)
            elif tok.kind == "INFIX" and tok.value in _INFIX:
                left_bp, right_bp = _INFIX[tok.value]
                if left_bp < min_bp:
                    break
                self.pos += 1
                left = Binary(tok.value, left, self.expression(right_bp))
            else:
                break
        return left

    def prefix(self) -> Node:
        tok = self.take()
        kind = tok.kind
        if kind == "NUM":
            return Number(float(tok.value))
        if kind == "TEXT":
            return Text(tok.value[1:-1].replace('""', '"'))
        if kind == "BOOL":
            return Bool(tok.value.upper() == "TRUE")
        if kind == "ERR":
            return ErrorLit(tok.value.upper())
        if kind == "REF":
            return _reference(self.ctx, tok.value)
        if kind == "PREFIX" and tok.value in "+-":
            return Unary(tok.value, self.expression(_PREFIX_BP))
        if kind == "(":
            inner = self.expression(0)
            self.expect(")")
            return inner
        if kind == "FUNC":
            return self.call(tok.value)
        if kind == "{":
            return self.array()
        raise self.fail(f"unexpected {tok.value or kind!r}")

    def call(self, raw_name: str) -> Call:
        name = raw_name.upper()
        while name.startswith(_STORAGE_PREFIXES):
            name = name.split(".", 1)[1]
        args: list[Node] = []
        if self.peek() == _Tok(")"):
            self.pos += 1
            return Call(name, ())
        while True:
            tok = self.peek()
            args.append(Missing() if tok in (_Tok(","), _Tok(")")) else self.expression(0))
            closing = self.take()
            if closing.kind == ")":
                return Call(name, tuple(args))
            if closing.kind != ",":
                raise self.fail(f"expected ',' or ')' in {raw_name}(), found {closing.value!r}")

    def array(self) -> ArrayNode:
        rows: list[tuple[Node, ...]] = []
        row: list[Node] = []
        while True:
            row.append(self.expression(0))
            sep = self.take()
            if sep.kind == ",":
                continue
            rows.append(tuple(row))
            row = []
            if sep.kind == "}":
                break
            if sep.kind != ";":
                raise self.fail(f"unexpected {sep.value or sep.kind!r} in an array constant")
        if len({len(r) for r in rows}) != 1:
            raise self.fail("the rows of an array constant differ in length")
        return ArrayNode(tuple(rows))


@lru_cache(maxsize=4096)
def _parse_free(text: str, sheet: str) -> Node:
    return _parse_now(_Context(text, sheet, None))


# Per-workbook caches, keyed by id() because Workbook (a mutable dataclass) is unhashable;
# a finaliser drops a cache when its workbook is collected.
_BOOK_CACHES: dict[int, dict[tuple[str, str], Node]] = {}


def _book_cache(workbook: Workbook) -> dict[tuple[str, str], Node]:
    key = id(workbook)
    cache = _BOOK_CACHES.get(key)
    if cache is None:
        cache = _BOOK_CACHES[key] = {}
        weakref.finalize(workbook, _BOOK_CACHES.pop, key, None)
    return cache


def parse(text: str, sheet: str, workbook: Workbook | None = None) -> Node:
    """Parse formula ``text`` (with or without '=') written on ``sheet``.

    With a workbook, defined names become the nodes they refer to (sheet scope first) and whole
    columns end at the sheet's last used row. Raises FormulaError on text that cannot be parsed.
    """
    if workbook is None:
        return _parse_free(text, sheet)
    cache = _book_cache(workbook)
    node = cache.get((text, sheet))
    if node is None:
        node = cache[(text, sheet)] = _parse_now(_Context(text, sheet, workbook))
    return node


def _parse_now(ctx: _Context) -> Node:
    try:
        return _Parser(ctx).parse()
    except RecursionError as exc:
        raise FormulaError(f"cannot parse formula {ctx.text!r}: it nests too deeply") from exc
