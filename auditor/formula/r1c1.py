"""A1 references in formula text ↔ relative R1C1, over openpyxl's tokenizer.

A block of formulas copied down or across keeps its *relative R1C1* text: ``=SLOPE(B4:B13,A4:A13)``
written in E4 and ``=SLOPE(E4:E13,D4:D13)`` written in H4 are both
``=SLOPE(RC[-3]:R[9]C[-3],RC[-4]:R[9]C[-4])`` (``R`` alone is ``R[0]``). A cell whose
R1C1 text differs from its copies breaks the pattern; an absolute reference (``$E$3``) stays
``R3C5`` in every copy, which is how a copied block keeps pointing at its first instance.

Only reference operands are rewritten; text constants, numbers, names, structured table
references and errors are kept as written, so ``to_a1(to_r1c1(f, r, c), r, c) == f`` for any
formula whose references stay on the grid. The tokenizer leaves a reference whole, sheet prefix
included (``'My Data'!$B$2:$B$9``, ``[1]Data!A1``), and glues a range operator onto a following
function (``A1:INDEX(``); both are split here.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass

from openpyxl.formula.tokenizer import Token

from auditor.formula.tokens import tokenize
from auditor.grid import A1_CELL, A1_COLUMN, A1_ROW, MAX_COL, MAX_ROW, column_index, column_letter

_STORAGE_PREFIXES = ("_XLFN.", "_XLWS.", "_XLUDF.")

_OFFSET = r"(\[-?\d+\]|\d+)?"
_RC_CELL = re.compile(rf"^R{_OFFSET}C{_OFFSET}$", re.I)
_RC_ROW = re.compile(rf"^R{_OFFSET}$", re.I)
_RC_COL = re.compile(rf"^C{_OFFSET}$", re.I)


@dataclass(frozen=True)
class Corner:
    """One end of a reference, in absolute grid coordinates (1-based) with its ``$`` flags.

    ``row`` is None for a whole column (``B:B``), ``col`` None for a whole row (``3:3``).
    """

    row: int | None
    col: int | None
    row_absolute: bool = False
    col_absolute: bool = False


@dataclass(frozen=True)
class Reference:
    """A reference operand as written: its sheet prefix (with the ``!``) and one or two corners."""

    prefix: str
    start: Corner
    end: Corner | None = None

    @property
    def sheet(self) -> str | None:
        """The sheet name, unquoted and without a workbook marker; None on the formula's sheet."""
        if not self.prefix:
            return None
        return _split_prefix(self.prefix)[1]

    @property
    def external(self) -> str | None:
        """``[1]`` or ``[other.xlsx]`` for a reference into another workbook."""
        return _split_prefix(self.prefix)[0] if self.prefix else None

    @property
    def corners(self) -> tuple[Corner, ...]:
        return (self.start,) if self.end is None else (self.start, self.end)

    @property
    def anchored(self) -> bool:
        """Any ``$`` in it: a part that does not move when the formula is copied."""
        return any(c.row_absolute or c.col_absolute for c in self.corners)


Rewrite = Callable[[Reference], str | None]  # the new text of a reference; None keeps it


def _split_outside_quotes(text: str, sep: str) -> list[str]:
    parts, quoted, start = [], False, 0
    for i, char in enumerate(text):
        if char == "'":
            quoted = not quoted  # a doubled '' inside a quoted name toggles twice: no effect
        elif char == sep and not quoted:
            parts.append(text[start:i])
            start = i + 1
    parts.append(text[start:])
    return parts


def _split_prefix(prefix: str) -> tuple[str | None, str]:
    """``'[1]My Data'!`` -> ("[1]", "My Data")."""
    body = prefix[:-1] if prefix.endswith("!") else prefix
    if len(body) >= 2 and body[0] == body[-1] == "'":
        body = body[1:-1].replace("''", "'")
    if body.startswith("[") and "]" in body:
        cut = body.index("]") + 1
        return body[:cut], body[cut:]
    return None, body


def _with_prefix(part: str) -> tuple[str, str]:
    pieces = _split_outside_quotes(part, "!")
    if len(pieces) == 1:
        return "", part
    return "!".join(pieces[:-1]) + "!", pieces[-1]


def _a1_corner(text: str, kind: str) -> Corner | None:
    if kind == "cell" and (m := A1_CELL.match(text)):
        row, col = int(m.group(4)), column_index(m.group(2))
        if 1 <= row <= MAX_ROW and 1 <= col <= MAX_COL:
            return Corner(row, col, m.group(3) == "$", m.group(1) == "$")
    if kind == "col" and (m := A1_COLUMN.match(text)):
        col = column_index(m.group(2))
        return Corner(None, col, False, m.group(1) == "$") if col <= MAX_COL else None
    if kind == "row" and (m := A1_ROW.match(text)):
        row = int(m.group(2))
        return Corner(row, None, m.group(1) == "$", False) if 1 <= row <= MAX_ROW else None
    return None


def parse_a1(operand: str) -> Reference | None:
    """A reference operand in A1 notation, or None for a name, table reference or error."""
    parts = _split_outside_quotes(operand, ":")
    if len(parts) > 2:
        return None
    prefix, first = _with_prefix(parts[0])
    if len(parts) == 1:
        corner = _a1_corner(first, "cell")
        return Reference(prefix, corner) if corner else None
    second_prefix, second = _with_prefix(parts[1])
    if second_prefix and second_prefix.lower() != prefix.lower():
        return None  # Sheet1!A1:Sheet2!B2 (a 3-D span): left as written
    for kind in ("cell", "col", "row"):
        start, end = _a1_corner(first, kind), _a1_corner(second, kind)
        if start and end:
            return Reference(prefix, start, end)
    return None


def _rc_part(text: str | None, here: int) -> tuple[int, bool]:
    """``[-2]`` -> (here - 2, relative); ``5`` -> (5, absolute); empty -> (here, relative)."""
    if not text:
        return here, False
    if text.startswith("["):
        return here + int(text[1:-1]), False
    return int(text), True


def _rc_corner(text: str, kind: str, row: int, col: int) -> Corner | None:
    pattern = {"cell": _RC_CELL, "row": _RC_ROW, "col": _RC_COL}[kind]
    m = pattern.match(text)
    if not m:
        return None
    if kind == "cell":
        (r, r_abs), (c, c_abs) = _rc_part(m.group(1), row), _rc_part(m.group(2), col)
        return Corner(r, c, r_abs, c_abs)
    if kind == "row":
        r, r_abs = _rc_part(m.group(1), row)
        return Corner(r, None, r_abs, False)
    c, c_abs = _rc_part(m.group(1), col)
    return Corner(None, c, False, c_abs)


def parse_r1c1(operand: str, row: int, col: int) -> Reference | None:
    """A reference operand in R1C1 notation, resolved against the cell (row, col) holding it."""
    parts = _split_outside_quotes(operand, ":")
    if len(parts) > 2:
        return None
    prefix, first = _with_prefix(parts[0])
    if len(parts) == 1:
        corner = _rc_corner(first, "cell", row, col)
        return Reference(prefix, corner) if corner else None
    _, second = _with_prefix(parts[1])
    for kind in ("cell", "row", "col"):
        start, end = _rc_corner(first, kind, row, col), _rc_corner(second, kind, row, col)
        if start and end:
            return Reference(prefix, start, end)
    return None


def _tokens(formula: str, keep_space: bool = True) -> list[Token]:
    return [t for t in tokenize(formula) if keep_space or t.type != Token.WSPACE]


def rewrite_references(
    formula: str,
    rewrite: Rewrite,
    parse: Callable[[str], Reference | None] = parse_a1,
    expand: Callable[[str], str | None] | None = None,
    keep_space: bool = True,
) -> str:
    """The formula with every reference operand replaced by ``rewrite``'s text for it.

    ``expand`` maps an operand that is not a reference (a defined name) to the reference text it
    stands for, which is then rewritten in its place; None leaves the operand as written.
    """

    def convert(operand: str) -> str:
        ref = parse(operand)
        if ref is None and expand is not None:
            meant = expand(operand)
            ref = parse(meant) if meant else None
        if ref is None:
            return operand
        new = rewrite(ref)
        return operand if new is None else new

    out = []
    for token in _tokens(formula, keep_space):
        value = token.value
        if token.type == Token.OPERAND and token.subtype == Token.RANGE:
            value = convert(value)
        elif token.type == Token.FUNC and token.subtype == Token.OPEN:
            head, colon, name = value.rpartition(":")  # "A1:INDEX(": a range into a function
            if colon and head:
                value = convert(head) + ":" + name
        out.append(value)
    return "=" + "".join(out)


def references(formula: str, expand: Callable[[str], str | None] | None = None) -> list[Reference]:
    """Every A1 reference operand of the formula, in order (names expanded by ``expand``)."""
    found: list[Reference] = []

    def keep(ref: Reference) -> None:
        found.append(ref)

    rewrite_references(formula, lambda ref: keep(ref), expand=expand)
    return found


def _r1c1_part(letter: str, target: int, here: int, absolute: bool) -> str:
    if absolute:
        return f"{letter}{target}"
    return letter if target == here else f"{letter}[{target - here}]"


def _r1c1_corner(corner: Corner, row: int, col: int) -> str:
    text = ""
    if corner.row is not None:
        text += _r1c1_part("R", corner.row, row, corner.row_absolute)
    if corner.col is not None:
        text += _r1c1_part("C", corner.col, col, corner.col_absolute)
    return text


def r1c1_text(ref: Reference, row: int, col: int, compact: bool = False) -> str:
    """One reference in R1C1, relative to the cell (row, col) that holds it.

    ``compact`` writes one whole column or row once (``C[-2]``, not ``C[-2]:C[-2]``), as the
    spreadsheet's own R1C1 view does."""
    start = _r1c1_corner(ref.start, row, col)
    if ref.end is None:
        return ref.prefix + start
    end = _r1c1_corner(ref.end, row, col)
    whole = ref.start.row is None or ref.start.col is None
    if compact and whole and start == end:
        return ref.prefix + start
    return ref.prefix + start + ":" + end


def to_r1c1(formula: str, row: int, col: int, compact: bool = False) -> str:
    """``=SLOPE(B4:B13,$A$4:$A$13)`` in E4 -> ``=SLOPE(RC[-3]:R[9]C[-3],R4C1:R13C1)``.

    ``compact`` is the form finding identities use: whitespace outside text dropped (re-spacing
    a formula changes nothing) and one whole column or row written once. Raises FormulaError
    when the tokenizer cannot read the formula."""
    return rewrite_references(
        formula, lambda ref: r1c1_text(ref, row, col, compact), keep_space=not compact
    )


def _a1_corner_text(corner: Corner) -> str | None:
    if (corner.row is not None and not 1 <= corner.row <= MAX_ROW) or (
        corner.col is not None and not 1 <= corner.col <= MAX_COL
    ):
        return None
    text = ""
    if corner.col is not None:
        text += ("$" if corner.col_absolute else "") + column_letter(corner.col)
    if corner.row is not None:
        text += ("$" if corner.row_absolute else "") + str(corner.row)
    return text


def a1_text(ref: Reference) -> str:
    """One reference in A1 notation; ``#REF!`` when it falls off the grid."""
    start = _a1_corner_text(ref.start)
    end = _a1_corner_text(ref.end) if ref.end is not None else ""
    if start is None or end is None:
        return ref.prefix + "#REF!"
    return ref.prefix + start + (":" + end if end else "")


def to_a1(formula: str, row: int, col: int) -> str:
    """The inverse of :func:`to_r1c1`: R1C1 text as the cell (row, col) would hold it in A1."""
    return rewrite_references(formula, a1_text, lambda text: parse_r1c1(text, row, col))


def canonical(formula: str) -> str:
    """Formula text with spelling differences that change nothing removed, for comparisons.

    Function names upper case without ``_xlfn.``-style storage prefixes, ``TRUE()`` as ``TRUE``,
    names and references upper case, spaces dropped except where one is the intersection
    operator. Text constants are kept exactly.
    """
    tokens = _tokens(formula)
    out: list[str] = []
    for i, token in enumerate(tokens):
        kind, value = token.type, token.value
        if kind == Token.WSPACE:
            before = tokens[i - 1] if i else None
            after = tokens[i + 1] if i + 1 < len(tokens) else None
            if (
                before is not None
                and after is not None
                and (before.type == Token.OPERAND or before.subtype == Token.CLOSE)
                and (after.type == Token.OPERAND or after.type == Token.FUNC)
                and after.subtype != Token.CLOSE
            ):
                out.append(" ")
            continue
        if kind == Token.FUNC and token.subtype == Token.OPEN:
            head, colon, name = value.rpartition(":")
            name = name.upper()
            while name.startswith(_STORAGE_PREFIXES):
                name = name.split(".", 1)[1]
            value = (head.upper() + colon if colon else "") + name
            following = tokens[i + 1] if i + 1 < len(tokens) else None
            if name in ("TRUE(", "FALSE(") and following is not None:
                if following.type == Token.FUNC and following.subtype == Token.CLOSE:
                    value = name[:-1] + "\0"  # the call's ")" is dropped below
        elif kind == Token.FUNC and token.subtype == Token.CLOSE and out and out[-1].endswith("\0"):
            out[-1] = out[-1][:-1]
            continue
        elif kind == Token.OPERAND and token.subtype in (Token.RANGE, Token.LOGICAL):
            value = value.upper()
        out.append(value)
    return "=" + "".join(out)
