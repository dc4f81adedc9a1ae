"""Shared formulas: the anchor's text, moved to each cell of the block as openpyxl moves it.

A workbook saved by a spreadsheet application writes a filled-down column once, on its first
cell (``<f t="shared" ref="C2:C900" si="0">A2*B2</f>``), and the other cells name only the
group (``<f t="shared" si="0"/>``). openpyxl's ``Translator`` gives each cell its own text: it
walks the anchor's tokens and rewrites every relative reference by the cell's offset, with
regular expressions, on every cell. That was a third of the reading time of workbooks saved by
Excel. :class:`SharedFormula` does openpyxl's rewriting once, on the anchor, into a template:
the text between references as fixed pieces, each relative row and column as a number to
offset. A cell's text is then the pieces joined with the offset numbers.

The output is ``Translator.translate_formula``'s, character for character, and so are its
failures (the same tokenizer error when the anchor cannot be tokenised; ``TranslatorError``,
"Formula out of range", when a reference would leave the sheet): the same regular expressions
and column conversions decide what is a reference (``tests/read/test_shared_formulas.py``
compares the two on generated formulas and offsets).
"""

from __future__ import annotations

from openpyxl.formula.tokenizer import Token, Tokenizer
from openpyxl.formula.translate import Translator, TranslatorError
from openpyxl.utils import column_index_from_string, get_column_letter

OPERAND, RANGE = Token.OPERAND, Token.RANGE

# A piece of a template: fixed text, or a relative row (True) or column (False) and its number
# at the anchor.
_Piece = str | tuple[bool, int]


class SharedFormula:
    """The text of a shared formula's anchor at (``row``, ``col``), ready to be moved."""

    def __init__(self, formula: str, row: int, col: int) -> None:
        self.row, self.col = row, col
        tokens = Tokenizer(formula).items
        self.tokens: list[Token] = tokens  # the anchor's, as openpyxl's tokenizer gives them
        self.moves: list[list[_Piece] | None] = []  # per token: its template when it moves
        self.bounds = [row, col, row, col]  # the cells of the group met so far
        self.fixed: str | None = None  # the text every cell gets, when nothing moves
        self.pieces: list[_Piece] = []
        self.columns: _Forms = {}  # the text's forms by column offset (see _filled)
        self.move_forms: list[_Forms] = []  # each moving token's, made when first asked for
        if not tokens:
            self.fixed = ""
        elif tokens[0].type == Token.LITERAL:
            self.fixed = tokens[0].value
        else:
            pieces: list[_Piece] = ["="]
            for token in tokens:
                if token.type == Token.OPERAND and token.subtype == Token.RANGE:
                    moved = _reference(token.value)
                    pieces += moved
                    self.moves.append(_merged(moved))
                else:
                    pieces.append(token.value)
                    self.moves.append(None)
            self.pieces = _merged(pieces)
            if len(self.pieces) == 1 and isinstance(self.pieces[0], str):
                self.fixed = self.pieces[0]

    def include(self, row: int, col: int) -> None:
        """Widen the group's bounds to a cell that names it."""
        bounds = self.bounds
        if row > bounds[2]:
            bounds[2] = row
        if col < bounds[1]:
            bounds[1] = col
        elif col > bounds[3]:
            bounds[3] = col

    def at(self, row: int, col: int) -> str:
        """The formula as it reads in the cell at (``row``, ``col``)."""
        if self.fixed is not None:
            return self.fixed
        return _filled(self.pieces, row - self.row, col - self.col, self.columns)

    def tokens_at(self, row: int, col: int) -> list[Token]:
        """openpyxl's tokens of :meth:`at`'s text without tokenising it: the anchor's tokens,
        each moving reference given its moved text (the tokens are the text's, cut at the same
        places: a reference's letters and digits never end or start a token)."""
        if not self.moves:  # nothing moves: the anchor's tokens (a name keeps no sheet, below)
            return self.tokens
        row_delta, col_delta = row - self.row, col - self.col
        if len(self.move_forms) != len(self.moves):
            self.move_forms = [{} for _ in self.moves]
        return [
            token
            if move is None
            else Token(_filled(move, row_delta, col_delta, forms), OPERAND, RANGE)
            for token, move, forms in zip(self.tokens, self.moves, self.move_forms, strict=True)
        ]


# The pieces with their columns moved by one offset: a format string with a place for each
# relative row, those rows at the anchor, and the lowest of them.
_Form = tuple[str, tuple[int, ...], int]
_Forms = dict[int, _Form]
_NO_ROW = 1 << 62  # the lowest row of a form without relative rows: never leaves the sheet


def _filled(
    pieces: list[_Piece], row_delta: int, col_delta: int, forms: _Forms | None = None
) -> str:
    """The pieces with each relative row and column moved (TranslatorError off the sheet).

    With ``forms`` (kept per template by the caller), the columns are moved once per column
    offset and only the rows per cell: the cells of a filled-down column share one offset."""
    if forms is None:
        return _moved(pieces, row_delta, col_delta)
    form = forms.get(col_delta)
    if form is None:
        form = forms[col_delta] = _column_form(pieces, col_delta)
    text, rows, lowest = form
    if lowest + row_delta <= 0:
        raise TranslatorError("Formula out of range")
    if not rows:
        return text
    return text.format(*[row + row_delta for row in rows])


def _column_form(pieces: list[_Piece], col_delta: int) -> _Form:
    """The pieces with their columns moved by ``col_delta`` (TranslatorError off the sheet):
    the text itself when no row moves, else a format string (braces of the text doubled)."""
    parts: list[str | None] = []  # None: a relative row's place
    rows: list[int] = []
    for piece in pieces:
        if isinstance(piece, str):
            parts.append(piece)
        elif piece[0]:
            parts.append(None)
            rows.append(piece[1])
        else:
            parts.append(_column(piece[1] + col_delta))
    if not rows:
        return "".join(map(str, parts)), (), _NO_ROW
    text = "".join("{}" if p is None else p.replace("{", "{{").replace("}", "}}") for p in parts)
    return text, tuple(rows), min(rows)


def _column(index: int) -> str:
    try:
        letters: str = get_column_letter(index)
    except ValueError:
        raise TranslatorError("Formula out of range") from None
    return letters


def _moved(pieces: list[_Piece], row_delta: int, col_delta: int) -> str:
    """:func:`_filled` piece by piece, the definition the forms are held to."""
    out: list[str] = []
    for piece in pieces:
        if isinstance(piece, str):
            out.append(piece)
        elif piece[0]:
            moved = piece[1] + row_delta
            if moved <= 0:
                raise TranslatorError("Formula out of range")
            out.append(str(moved))
        else:
            try:
                out.append(get_column_letter(piece[1] + col_delta))
            except ValueError:
                raise TranslatorError("Formula out of range") from None
    return "".join(out)


def _reference(text: str) -> list[_Piece]:
    """``Translator.translate_range`` as a template: the same tests in the same order."""
    sheet, bang, reference = text.rpartition("!")
    sheet_part = sheet + bang
    match = Translator.ROW_RANGE_RE.match(reference)  # e.g. 3:4
    if match is not None:
        return [sheet_part, _row(match.group(1)), ":", _row(match.group(2))]
    match = Translator.COL_RANGE_RE.match(reference)  # e.g. A:BC
    if match is not None:
        return [sheet_part, _col(match.group(1)), ":", _col(match.group(2))]
    if ":" in reference:  # e.g. A1:B5, or ends given by names
        pieces: list[_Piece] = [sheet_part]
        for number, end in enumerate(reference.split(":")):
            if number:
                pieces.append(":")
            pieces += _reference(end)
        return pieces
    match = Translator.CELL_REF_RE.match(reference)
    if match is None:  # a name: openpyxl gives it without its sheet
        return [reference]
    return [sheet_part, _col(match.group(1)), _row(match.group(2))]


def _row(text: str) -> _Piece:
    return text if text.startswith("$") else (True, int(text))


def _col(text: str) -> _Piece:
    return text if text.startswith("$") else (False, column_index_from_string(text))


def _merged(pieces: list[_Piece]) -> list[_Piece]:
    """Neighbouring fixed pieces joined into one."""
    out: list[_Piece] = []
    for piece in pieces:
        if isinstance(piece, str) and out and isinstance(out[-1], str):
            out[-1] += piece
        elif piece != "":
            out.append(piece)
    return out


class SharedGroups:
    """A sheet's shared-formula groups, found by the cell: the tokens of a cell's formula
    without tokenising it, when the cell's text is the one its group gives at its place."""

    def __init__(self, groups: list[SharedFormula]) -> None:
        self.groups = groups
        self._by_col: dict[int, list[SharedFormula]] | None = None
        self._last: dict[int, SharedFormula] = {}

    def tokens(self, row: int, col: int, text: str) -> list[Token] | None:
        group = self.group_at(row, col, text)
        return group.tokens_at(row, col) if group is not None else None

    def group_at(self, row: int, col: int, text: str) -> SharedFormula | None:
        """The group whose formula reads ``text`` at (``row``, ``col``), if one does."""
        by_col = self._by_col if self._by_col is not None else self._index()
        groups = by_col.get(col)
        if not groups:
            return None
        # The group that served this column last is tried first: cells come row by row, and a
        # column filled in many separate strokes has a group for each.
        last = self._last.get(col)
        for group in [last, *groups] if last is not None else groups:
            bounds = group.bounds
            if bounds[0] <= row <= bounds[2]:
                try:
                    if group.at(row, col) == text:
                        self._last[col] = group
                        return group
                except TranslatorError:
                    continue  # not this group's cell: its references would leave the sheet
        return None

    def _index(self) -> dict[int, list[SharedFormula]]:
        by_col: dict[int, list[SharedFormula]] = {}
        for group in self.groups:
            for col in range(group.bounds[1], group.bounds[3] + 1):
                by_col.setdefault(col, []).append(group)
        self._by_col = by_col
        return by_col
