"""Words that name quantities and give roles: tokens, rates and titles.

A regression's formulas name two ranges; its words name two quantities (read into a
:class:`~auditor.locate.meaning.Meaning`, judged in :mod:`auditor.diagnose.roles_words`). Two
kinds of text give roles:

- a **rate** in a statistic's label: ``Slope (kWh per °C)``, ``SE of slope (L fuel per t load)``,
  ``Pendiente (NTU por L/s)``: the slope's unit is y's unit per x's unit, a fact of arithmetic;
- a **unit** in the label of a statistic measured in y's unit: ``Intercept (NTU)``;
- a **title** that names two quantities: ``Fuel vs load``, ``Turbidity against flow``,
  ``Yield as a function of dose``: by convention the first is y (common practice), so a title is
  weaker evidence than a rate.

Words are compared as normalised tokens (lower case, NFKC, micro sign as ``u``, a plural ``s``
dropped, four-letter prefixes matching: ``temp`` ~ ``temperature``), never as listed spellings.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from functools import lru_cache

from auditor.locate.roles import role_from_label

MAX_WORDS = 120  # longer texts are notes, not labels or titles

_SPLIT = re.compile(r"[\s()\[\]{},;:|=—]+|(?<=[^\W\d_])-(?=[^\W\d_])")
# Words that name no quantity: articles and prepositions of the languages labels come in, and
# the placeholders of generic headers ("x", "y", "value").
_EMPTY = frozenset(
    "a an the of in at on for and or to by with from per vs versus against de la el los las "
    "del en y e por con der die das des dem den und von vom pro je gegen le les du et par sur "
    "contre di da do della van het als "
    "x y x1 y1 xi yi value values data variable var series col column no nr number "
    "obs observation index i n".split()
)
# A rate: "<y> per <x>" in the languages labels come in; a slash with spaces around is one too
# (a slash without spaces belongs to a unit: mg/L).
_RATE = re.compile(r"\s(?:per|por|pro|je|par)\s|\s/\s", re.I)
# A title naming y then x (y first by convention, common practice).
_TITLE = re.compile(
    r"\s(?:vs\.?|v\.|versus|against|as a function|frente a|contra|en funci[oó]n|em função|"
    r"gegen(?:über)?|in abhängigkeit|en fonction|contre|contro|in funzione|tegen|als functie)\s",
    re.I,
)
_OPEN = "([{,:;"
_CLOSE = ")]},;"


@lru_cache(maxsize=8192)
def tokens(text: str) -> frozenset[str]:
    """The words of a text that can name a quantity or a unit, normalised. (Kept per text:
    every regression of a sheet reads the sheet's titles and labels again.)"""
    text = unicodedata.normalize("NFKC", text).lower().replace("μ", "u")
    out = set()
    for raw in _SPLIT.split(text):
        word = raw.strip(".'\"*_-–")
        if not word or word in _EMPTY or _is_number(word):
            continue
        if word.isalpha() and len(word) > 3 and word.endswith("s") and not word.endswith("ss"):
            word = word[:-1]
        out.add(word)
    return frozenset(out)


def _is_number(word: str) -> bool:
    try:
        float(word)
    except ValueError:
        return False
    return True


def same_word(a: str, b: str) -> bool:
    """Equal, or one a prefix of the other of at least four letters (``temp``, ``conc``)."""
    if a == b:
        return True
    short, long_ = (a, b) if len(a) <= len(b) else (b, a)
    return len(short) >= 4 and short.isalpha() and long_.startswith(short)


def shared(a: frozenset[str], b: frozenset[str]) -> list[str]:
    """The words of ``a`` that some word of ``b`` matches."""
    found = set(a & b)
    # Only words of four letters or more can match other than exactly (a prefix of them).
    longer = [v for v in b if len(v) >= 4]
    for word in a - found:
        if len(word) >= 4 and any(same_word(word, v) for v in longer):
            found.add(word)
    return sorted(found)


def akin(a: frozenset[str], b: frozenset[str]) -> bool:
    """Might the two sets name the same thing? Looser than :func:`shared`: a prefix of three
    letters counts (``abs`` ~ ``absorbance``). Used only to hold back a finding (words that may
    name the range read agree with it), never to make one."""
    return bool(shared(a, b)) or any(
        min(len(u), len(v)) >= 3
        and u.isalpha()
        and v.isalpha()
        and (u.startswith(v) or v.startswith(u))
        for u in a
        for v in b
    )


@dataclass(frozen=True)
class Statement:
    """Words that give the roles: which quantity is y and which is x.

    ``strength`` is ``rate`` (a slope's unit: y per x), ``unit`` (an intercept's or a residual
    SD's unit: y's) or ``title`` (y first by convention)."""

    text: str
    cell: str
    strength: str
    y_words: frozenset[str]
    x_words: frozenset[str]

    @property
    def factual(self) -> bool:
        """Says the roles by arithmetic (units), not by a convention of word order."""
        return self.strength != "title"


def _phrase_before(text: str, at: int, whole: bool) -> str:
    """The words before a connector back to an opening bracket or comma (or, in a rate with no
    bracket, the one word before it: "Slope kWh per °C" names y by "kWh")."""
    left = text[:at]
    cut = max(left.rfind(ch) for ch in _OPEN)
    if cut >= 0:
        return left[cut + 1 :]
    if whole:
        return left
    last = (left.split() or [""])[-1]
    return "" if role_from_label(last) else last  # "Slope per 100": the statistic's own name


def _phrase_after(text: str, end: int) -> str:
    right = text[end:]
    cuts = [i for i in (right.find(ch) for ch in _CLOSE) if i >= 0]
    return right[: min(cuts)] if cuts else right


def read_statement(text: str, cell: str, rate: bool) -> Statement | None:
    """The roles one text gives: a rate (``y per x``) in a statistic's label, or a title."""
    said = _roles_said(text, rate)
    return None if said is None else Statement(text, cell, "rate" if rate else "title", *said)


@lru_cache(maxsize=8192)  # a sheet's title and name are read again for each of its regressions
def _roles_said(text: str, rate: bool) -> tuple[frozenset[str], frozenset[str]] | None:
    """(y words, x words) of :func:`read_statement`, wherever the text sits."""
    if len(text) > MAX_WORDS:
        return None
    pattern = _RATE if rate else _TITLE
    match = pattern.search(f" {text} ")
    if match is None:
        return None
    padded = f" {text} "
    y_words = tokens(_phrase_before(padded, match.start(), whole=not rate))
    x_words = tokens(_phrase_after(padded, match.end()))
    if not (y_words or x_words):
        return None
    return y_words, x_words


_BRACKETED = re.compile(r"[(\[]([^()\[\]]+)[)\]]")


def read_unit(text: str, cell: str) -> Statement | None:
    """The y unit in brackets in the label of a statistic measured in y's unit (an
    intercept, a residual SD): ``Intercept (NTU)``, ``Ordenada al origen [L]``."""
    if len(text) > MAX_WORDS:
        return None
    inside = _BRACKETED.findall(text)
    if len(inside) != 1 or _RATE.search(f" {inside[0]} "):
        return None  # no unit, several, or a rate (read as a rate where it belongs)
    words = tokens(inside[0])
    return Statement(text, cell, "unit", words, frozenset()) if words else None


def units_of(header: str) -> frozenset[str]:
    """The unit a header gives in brackets: ``Flow (L/s)`` -> {"l/s"} (empty when none)."""
    inside = _BRACKETED.findall(header)
    return tokens(inside[-1]) if inside else frozenset()


def read_slash_rate(text: str, cell: str, units: list[frozenset[str]]) -> Statement | None:
    """A rate written with a slash, ``Slope (kWh/°C)`` or ``Slope (NTU/L/s)``: units hold
    slashes too, so it is split only where both sides are units of the table's headers
    (``units``), and only when exactly one split is."""
    if len(text) > MAX_WORDS or _RATE.search(f" {text} "):
        return None
    inside = _BRACKETED.findall(text)
    if len(inside) != 1 or "/" not in inside[0]:
        return None
    parts = inside[0].split("/")
    splits = [
        (tokens("/".join(parts[:i])), tokens("/".join(parts[i:]))) for i in range(1, len(parts))
    ]
    found = [(y, x) for y, x in splits if y and x and y != x and y in units and x in units]
    return Statement(text, cell, "rate", *found[0]) if len(found) == 1 else None
