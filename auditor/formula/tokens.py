"""Formula text -> tokens, on top of openpyxl's tokenizer.

openpyxl's :class:`~openpyxl.formula.tokenizer.Tokenizer` glues a range operator onto a function
name (``A1:INDEX(``) and keeps whitespace; this module splits the one and keeps the other only
where it is the intersection operator. The binding powers the parser uses live here too.
"""

from __future__ import annotations

from collections.abc import Sequence
from functools import lru_cache
from typing import NamedTuple

from openpyxl.formula.tokenizer import Token, Tokenizer, TokenizerError

from auditor.errors import FormulaError

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


class _Tok(NamedTuple):
    """One token the parser reads (a named tuple: formulas of hundreds of tokens are made of
    them by the thousand, and a tuple is quicker to make than a frozen data class)."""

    kind: str  # NUM TEXT BOOL ERR REF FUNC ( ) , ; { } PREFIX INFIX POSTFIX
    value: str = ""


def _split_outside_quotes(text: str, sep: str) -> list[str]:
    """``text`` split at each ``sep`` outside single quotes (``'My Data'!A1`` at "!" gives
    ``'My Data'`` and ``A1``). Each quote opens or closes a quoted stretch, so a doubled
    ``''`` inside a quoted name closes and reopens it: no effect. An unclosed quote runs to
    the end. Between quotes (the even pieces of ``text.split("'")``) every ``sep`` splits."""
    if "'" not in text:
        return text.split(sep)
    parts = [""]
    for index, piece in enumerate(text.split("'")):
        if index:
            parts[-1] += "'"
        if index % 2:
            parts[-1] += piece  # inside quotes: kept whole
            continue
        first, *rest = piece.split(sep)
        parts[-1] += first
        parts.extend(rest)
    return parts


# openpyxl's tokenizer signals unbalanced or odd text with several exception types.
TOKENIZER_FAILURES = (TokenizerError, IndexError, AssertionError, KeyError, ValueError)


def tokenize(formula: str) -> list[Token]:
    """openpyxl's tokens of ``formula`` ('=' added when missing); FormulaError when it cannot
    read the text. The one place the tokenizer is called."""
    return list(_tokenized(formula))


@lru_cache(maxsize=16384)
def _tokenized(formula: str) -> tuple[Token, ...]:
    """Kept per formula text: the locator, the evaluator and the checks read the same few
    formulas again and again (each block's cells, once per check). Callers only read tokens."""
    text = formula if formula.startswith("=") else "=" + formula
    try:
        return tuple(Tokenizer(text).items)
    except TOKENIZER_FAILURES as exc:
        raise FormulaError(f"cannot parse formula {formula!r}: {exc}") from exc


def _tokens(text: str, given: Sequence[Token] | None = None) -> list[_Tok]:
    """The parser's tokens of ``text``, from openpyxl's (``given``: already known for it)."""
    raw = tokenize(text) if given is None else given
    out: list[_Tok] = []
    for item in raw:
        kind, sub, value = item.type, item.subtype, item.value
        if kind == "OPERAND":
            out.append(_Tok(_OPERAND_KINDS.get(sub, "REF"), value))
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
    cleaned: list[_Tok] = []
    for i, tok in enumerate(out):
        if tok.kind != "WS":
            cleaned.append(tok)
        elif cleaned and cleaned[-1].kind in _ENDS and i + 1 < len(out):
            if out[i + 1].kind in _STARTS:
                cleaned.append(_Tok("INFIX", " "))
    return cleaned


_OPERAND_KINDS = {"NUMBER": "NUM", "TEXT": "TEXT", "LOGICAL": "BOOL", "ERROR": "ERR"}
_ENDS = frozenset({"NUM", "TEXT", "BOOL", "ERR", "REF", ")", "}", "POSTFIX"})  # an operand ends
_STARTS = frozenset({"REF", "FUNC", "("})  # an operand starts
