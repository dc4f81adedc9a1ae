"""Formula text -> a small syntax tree of calls, references and operators.

Built on openpyxl's :class:`~openpyxl.formula.tokenizer.Tokenizer`, which splits the text but
leaves references whole (``'My Data'!$B$2:$B$9``) and knows nothing of precedence. This module
splits what the tokenizer glues together, resolves defined names against the workbook and builds
the tree with the spreadsheet's operator precedence (binding tightest first)::

    :  (range)   ' ' (intersection)   - + (prefix)   %   ^   * /   + -   &   = <> < <= > >=

Unary minus binds tighter than ``^`` (``=-2^2`` is 4) and ``^`` is left-associative, as in the
spreadsheet applications. Whole columns (``A:A``) become explicit row spans ending at the sheet's
last used row, so that no reader of the tree sees a million-row reference.

The tree is defined in :mod:`auditor.formula.nodes`, the tokens in
:mod:`auditor.formula.tokens` and the parser in :mod:`auditor.formula.parser`; this module
is the interface to import from, and keeps the parse caches.
"""

from __future__ import annotations

import weakref
from functools import lru_cache
from typing import TYPE_CHECKING

from auditor.formula import templates
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
    calls,
    children,
    references,
    walk,
)
from auditor.formula.parser import _Context, _parse_now

if TYPE_CHECKING:
    from collections.abc import Sequence

    from openpyxl.formula.tokenizer import Token

    from auditor.read.workbook import Workbook

__all__ = [
    "SHEET_COLS",
    "SHEET_ROWS",
    "ArrayNode",
    "Binary",
    "Bool",
    "Call",
    "ErrorLit",
    "Missing",
    "NameNode",
    "Node",
    "Number",
    "Percent",
    "Ref",
    "RefNode",
    "Text",
    "Unary",
    "calls",
    "children",
    "parse",
    "references",
    "walk",
]


@lru_cache(maxsize=4096)
def _parse_free(text: str, sheet: str) -> Node:
    kept = templates.template(text, in_book=False)
    if kept is not None:
        return templates.rebind(kept, sheet)
    ctx = _Context(text, sheet, None)
    node = _parse_now(ctx)
    if ctx.portable:
        templates.keep(text, sheet, node, in_book=False)
    return node


# Per-workbook parse caches; an entry goes when its workbook is collected.
_BOOK_CACHES: weakref.WeakKeyDictionary[Workbook, dict[tuple[str, str], Node]] = (
    weakref.WeakKeyDictionary()
)


def book_cache(workbook: Workbook) -> dict[tuple[str, str], Node]:
    """The workbook's parses by (text, sheet): :func:`parse` fills it, and so may a caller
    that made a parse another way (auditor.locate.shared_parse)."""
    cache = _BOOK_CACHES.get(workbook)
    if cache is None:
        cache = _BOOK_CACHES[workbook] = {}
    return cache


def parse(
    text: str,
    sheet: str,
    workbook: Workbook | None = None,
    given: Sequence[Token] | None = None,
) -> Node:
    """Parse formula ``text`` (with or without '=') written on ``sheet``.

    With a workbook, defined names become the nodes they refer to (sheet scope first) and whole
    columns end at the sheet's last used row. Raises FormulaError on text that cannot be parsed.
    ``given``: openpyxl's tokens of ``text`` (with its '='), when already known.
    """
    if workbook is None:
        return _parse_free(text, sheet)
    cache = book_cache(workbook)
    node = cache.get((text, sheet))
    if node is None:
        node = cache[(text, sheet)] = _parse_in_book(text, sheet, workbook, given)
    return node


def _parse_in_book(
    text: str, sheet: str, workbook: Workbook, given: Sequence[Token] | None = None
) -> Node:
    """A parse on ``sheet``; from the text's template when one was kept (module
    :mod:`auditor.formula.templates`), else parsed, and kept when it is portable."""
    found = workbook.sheet(sheet)
    name = found.name if found is not None else sheet  # as the parser spells a reference's sheet
    kept = templates.template(text)
    if kept is not None:
        return templates.rebind(kept, name)
    ctx = _Context(text, sheet, workbook, given=given)
    node = _parse_now(ctx)
    if ctx.portable:
        templates.keep(text, name, node)
    return node
