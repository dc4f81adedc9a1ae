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

from collections.abc import Callable
from functools import lru_cache

from openpyxl.formula.tokenizer import Token

from auditor.formula.operands import Corner, Reference, Rewrite, parse_a1, parse_r1c1
from auditor.formula.tokens import tokenize
from auditor.grid import MAX_COL, MAX_ROW, column_letter

_STORAGE_PREFIXES = ("_XLFN.", "_XLWS.", "_XLUDF.")


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
    if expand is None:
        return list(_plain_references(formula))
    return _references(formula, expand)


@lru_cache(maxsize=4096)
def _plain_references(formula: str) -> tuple[Reference, ...]:
    """references() without names, kept per text (the checks read the same formulas often)."""
    return tuple(_references(formula, None))


def _references(formula: str, expand: Callable[[str], str | None] | None) -> list[Reference]:
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


@lru_cache(maxsize=16_384)
def canonical(formula: str) -> str:
    """Formula text with spelling differences that change nothing removed, for comparisons.

    Function names upper case without ``_xlfn.``-style storage prefixes, ``TRUE()`` as ``TRUE``,
    names and references upper case, spaces dropped except where one is the intersection
    operator. Text constants are kept exactly. (Kept per text: the checks ask for each cell's
    form more than once.)
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
