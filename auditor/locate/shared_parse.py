"""A shared formula's cells parsed once, on the group's anchor, and moved (auditor.formula.moved).

Why a moved tree is the parse of the cell's text: the cell's tokens are the anchor's with each
moving reference token's text rebuilt from a template (``SharedFormula.moves``: fixed pieces and
relative rows and columns; ``tokens_at``, proven equal to openpyxl's tokenizer on the text). A
tree is moved only when every moving token is a plain block of cells (``Data!$A2:B9``) whose
template is exactly the one its corners give: the sheet prefix and the ``$`` parts fixed, each
relative row and column a number. The moved token then reads as the same prefix and corners with
those numbers offset; the parser splits it at the same places (no quote, colon or '!' is in a
corner) and spans the same corners: the moved block. Anything else (a whole column, a name, a
parse error) is parsed from its tokens as before, and so is a cell whose text is not the one
its group gives at its place (a cell written over inside the block).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from openpyxl.formula.tokenizer import Token

from auditor.errors import FormulaError
from auditor.formula.moved import Corner, MovedTree, MovingRef, parse_with_refs
from auditor.formula.nodes import RefNode
from auditor.formula.tokens import _OPERAND_KINDS, _split_outside_quotes
from auditor.grid import A1_CELL, column_index
from auditor.read.shared_formulas import _merged

if TYPE_CHECKING:
    from auditor.read.shared_formulas import SharedFormula, _Piece
    from auditor.read.workbook import Workbook


def moved_tree(group: SharedFormula, sheet: str, workbook: Workbook) -> MovedTree | None:
    """The group's anchor parsed, ready to move; None when a moving reference is not a plain
    block of cells or the anchor does not parse."""
    if all(move is None for move in group.moves):
        return None  # nothing moves: every cell has the anchor's text (the parse cache serves)
    sources = _reference_sources(group.tokens)
    try:
        node, refs = parse_with_refs(group.at(group.row, group.col), sheet, workbook, group.tokens)
    except FormulaError:
        return None
    if len(refs) != len(sources):
        return None  # pragma: no cover - each reference token becomes one node
    moving: list[MovingRef] = []
    for index, ref in zip(sources, refs, strict=True):
        move = group.moves[index] if index is not None else None
        if index is None or move is None or _unmoved(group.tokens[index].value, move):
            continue
        corners = _corners(group.tokens[index].value, move)
        if corners is None or not isinstance(ref, RefNode):
            return None
        moving.append(MovingRef(ref, corners))
    return MovedTree(node, moving)


def _unmoved(text: str, move: list[_Piece]) -> bool:
    """A token whose template is its own text, fixed (a name, a ``$`` block): the same node in
    every cell. (A name after a sheet is not: openpyxl moves it without its sheet.)"""
    fixed = [piece for piece in move if isinstance(piece, str)]
    return len(fixed) == len(move) and "".join(fixed) == text


def _reference_sources(tokens: list[Token]) -> list[int | None]:
    """For each reference token the parser reads (auditor.formula.tokens._tokens), the index of
    openpyxl's token it comes from: an operand range, or None for the head of a function token
    the tokenizer glued to a range operator (``A1:INDEX(``), which never moves."""
    sources: list[int | None] = []
    for index, token in enumerate(tokens):
        if token.type == Token.OPERAND and token.subtype not in _OPERAND_KINDS:
            sources.append(index)
        elif token.type == Token.FUNC and token.subtype == Token.OPEN:
            head, colon, _ = token.value[:-1].rpartition(":")
            if colon and head:
                sources.append(None)
    return sources


def _corners(text: str, move: list[_Piece]) -> tuple[Corner, ...] | None:
    """The corners of a reference token as the parser reads them, when the token's template
    ``move`` is exactly the one they give (else None: the token is not moved as a block)."""
    pieces: list[_Piece] = []
    corners: list[Corner] = []
    for number, part in enumerate(_split_outside_quotes(text, ":")):
        body = _split_outside_quotes(part, "!")[-1]
        match = A1_CELL.match(body)
        if match is None:
            return None
        col_fixed, letters, row_fixed, digits = match.groups()
        row, col = int(digits), column_index(letters)
        if number:
            pieces.append(":")
        pieces.append(part[: len(part) - len(body)])
        pieces.append(col_fixed + letters if col_fixed else (False, col))
        pieces.append(row_fixed + digits if row_fixed else (True, row))
        corners.append((row, not row_fixed, col, not col_fixed))
    return tuple(corners) if _merged(pieces) == move else None
