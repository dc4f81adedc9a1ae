"""Tokens -> syntax tree: references split and resolved, defined names expanded, precedence.

A Pratt parser over the tokens of :mod:`auditor.formula.tokens`;
:func:`auditor.formula.syntax.parse`
is the entry point (it adds the caches).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from auditor.errors import FormulaError
from auditor.formula.nodes import (
    SHEET_COLS,
    SHEET_ROWS,
    ArrayNode,
    Binary,
    Bool,
    Call,
    ErrorLit,
    Missing,
    NameNode,
    Node,
    Number,
    Percent,
    Ref,
    RefNode,
    Text,
    Unary,
)
from auditor.formula.structured import resolve_structured
from auditor.formula.tokens import (
    _INFIX,
    _PERCENT_BP,
    _PREFIX_BP,
    _STORAGE_PREFIXES,
    _split_outside_quotes,
    _Tok,
    _tokens,
)
from auditor.grid import A1_CELL, A1_COLUMN, A1_ROW, column_index

if TYPE_CHECKING:
    from collections.abc import Sequence

    from openpyxl.formula.tokenizer import Token

    from auditor.read.workbook import Workbook

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
    # Nothing of the workbook read but the own sheet's name (auditor.formula.templates): no
    # sheet prefix, no whole column or row (the sheet's extent), no name or table reference.
    portable: bool = True
    # openpyxl's tokens of the text when already known (a shared formula's, moved from its
    # group's anchor: auditor.read.shared_formulas), else the text is tokenised.
    given: Sequence[Token] | None = None
    # When a list: each reference token's node, in the order of the tokens (the nodes that
    # auditor.formula.moved moves across a shared formula's group).
    refs: list[Node] | None = None


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
            ctx.portable = False
        bodies.append(body)
    sheet_name, max_row, max_col = _sheet_extent(ctx, sheet if sheet is not None else ctx.sheet)
    if external is not None:
        sheet_name = sheet or ""
    cells = [A1_CELL.match(b) for b in bodies]
    if all(cells):
        rows = [int(m.group(4)) for m in cells if m]
        cols = [column_index(m.group(2)) for m in cells if m]
        return RefNode(Ref(sheet_name, min(rows), min(cols), max(rows), max(cols), False, external))
    if len(parts) == 2:
        col_a, col_b = A1_COLUMN.match(bodies[0]), A1_COLUMN.match(bodies[1])
        if col_a and col_b:
            ctx.portable = False
            c1, c2 = sorted((column_index(col_a.group(2)), column_index(col_b.group(2))))
            return RefNode(Ref(sheet_name, 1, c1, max_row, c2, True, external))
        row_a, row_b = A1_ROW.match(bodies[0]), A1_ROW.match(bodies[1])
        if row_a and row_b:
            ctx.portable = False
            r1, r2 = sorted((int(row_a.group(2)), int(row_b.group(2))))
            return RefNode(Ref(sheet_name, r1, 1, r2, max_col, False, external, whole_row=True))
    if len(parts) == 1:
        return _name(ctx, bodies[0], sheet, external)
    # "Start:Finish" between two names (or a name and a cell): the range operator applied.
    node = _reference(ctx, parts[0])
    for part in parts[1:]:
        node = Binary(":", node, _reference(ctx, part))
    return node


def _name(ctx: _Context, name: str, sheet: str | None, external: str | None) -> Node:
    ctx.portable = False
    if external is not None:
        return NameNode(name, external)
    if ctx.workbook is None:
        return NameNode(name)
    if "[" in name:  # a structured table reference
        block = resolve_structured(ctx.workbook, name)
        return RefNode(block) if block is not None else NameNode(name)
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
        self.toks = _tokens(text, ctx.given)
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
            node = _reference(self.ctx, tok.value)
            if self.ctx.refs is not None:
                self.ctx.refs.append(node)
            return node
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
        tok = self.peek()
        if tok is not None and tok.kind == ")":
            self.pos += 1
            return Call(name, ())
        while True:
            tok = self.peek()
            empty = tok is not None and tok.kind in (",", ")")  # an argument left out
            args.append(Missing() if empty else self.expression(0))
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


def _parse_now(ctx: _Context) -> Node:
    try:
        return _Parser(ctx).parse()
    except RecursionError as exc:
        raise FormulaError(f"cannot parse formula {ctx.text!r}: it nests too deeply") from exc
