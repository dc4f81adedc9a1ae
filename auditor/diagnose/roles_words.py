"""Do the words give the formulas' ranges the roles the formulas give them?

From a :class:`~auditor.locate.meaning.Meaning` (headers, the headers beside, statements of rates
and titles) two judgements, each with the words that support it:

- **swapped**: the words name the formulas' x as y and their y as x (``Slope (L fuel per t
  load)`` over ``=INDEX(LINEST(load, fuel),1,1)``);
- **shifted**: the words name, for one role, the quantity of a column beside the range the
  formulas read, and not the quantity of the range itself (``Shoot height (cm) per day`` over a
  y range headed ``Leaf count`` next to ``Shoot height (cm)``).

A statement points at a header when its words match a word of that header that the other
headers in question do not share (``mg/L`` on both axes says nothing). Any statement that agrees
with the formulas' roles cancels the judgement: words that contradict each other are no
evidence. Rates and units (a slope's unit is y per x, an intercept's is y's: arithmetic) are
strong; a title's order (y first by convention, common practice) is weak, and a swap resting on
one convention alone is only a risk; two independent conventions that agree (the title's order
and the table's, x before y) make it major.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from auditor.locate.meaning import Header, Meaning
from auditor.locate.words import Statement, akin, shared


@dataclass(frozen=True)
class Cue:
    """One statement's say about one judgement, with the words it matched."""

    statement: Statement
    role: str  # "y" or "x": the role whose words matched
    matched: tuple[str, ...]
    header: Header  # the header its words match
    strong: bool = False  # a fact (a rate's unit, a quantity named), not a convention of order


@dataclass
class Judgement:
    """What the words say against the formulas' roles, and which statements say it."""

    kind: str  # "xy-swapped" or "range-shifted"
    role: str  # for a shift: the role whose range is beside the one meant ("y" or "x")
    cues: list[Cue] = field(default_factory=list)
    meant: Header | None = None  # for a shift: the header of the range the words name
    read: Header | None = None  # for a shift: the header of the range the formulas read
    conventions: list[str] = field(default_factory=list)  # weak cues that agree, in words

    @property
    def strong(self) -> bool:
        """A cue that rests on a fact (a slope's unit; a quantity named that the formulas do not
        read), or two independent conventions that agree; never one convention alone."""
        return any(cue.strong for cue in self.cues) or len(self.conventions) >= 2


def points_at(words: frozenset[str], candidates: list[Header]) -> tuple[Header, list[str]] | None:
    """The one candidate header whose own words (shared with no other candidate) ``words``
    match, with the words matched; None when none or several match."""
    return _Named(candidates).points_at(words)


class _Named:
    """Candidate headers, with the words of them all and, once a statement names any, the
    words each has alone: worked out once for all the statements weighed against them."""

    def __init__(self, candidates: list[Header]) -> None:
        self.candidates = candidates
        self.every = frozenset(w for h in candidates for w in h.words)
        self._own: list[tuple[Header, frozenset[str]]] | None = None

    def points_at(self, words: frozenset[str]) -> tuple[Header, list[str]] | None:
        """:func:`points_at` against these candidates."""
        if not words or not shared(words, self.every):
            return None  # names nothing of the table (most titles and labels): no header to weigh
        hits = []
        for header, own in self._owned():
            matched = shared(own, words)
            if matched:
                hits.append((header, matched))
        return hits[0] if len(hits) == 1 else None

    def _owned(self) -> list[tuple[Header, frozenset[str]]]:
        if self._own is None:
            self._own = []
            for index, header in enumerate(self.candidates):
                others = frozenset(
                    w for j, h in enumerate(self.candidates) if j != index for w in h.words
                )
                own = frozenset(w for w in header.words if not shared(frozenset([w]), others))
                self._own.append((header, own))
        return self._own


def contradictory(meaning: Meaning, named: _Named | None = None) -> bool:
    """Do the statements name one header as y in one place and as x in another? Words that
    contradict each other are no evidence either way. (``named``: the candidate headers, when
    the caller has them.)"""
    if meaning.x is None or meaning.y is None:
        return False
    named = named if named is not None else _Named(_candidates(meaning))
    roles: dict[str, set[str]] = {}
    for statement in meaning.statements:
        for role, words in (("y", statement.y_words), ("x", statement.x_words)):
            said = named.points_at(words)
            if said is not None:
                roles.setdefault(said[0].cell, set()).add(role)
    return any(len(said) > 1 for said in roles.values())


def _candidates(meaning: Meaning) -> list[Header]:
    """The headers words may name: x, y and those beside them, each once."""
    assert meaning.x is not None and meaning.y is not None
    every = [meaning.x, meaning.y, *meaning.x_beside, *meaning.y_beside]
    return list({header.cell: header for header in every}.values())


def judge_roles(meaning: Meaning) -> tuple[Judgement | None, Judgement | None]:
    """:func:`judge_swap`, and :func:`judge_shift` where no swap is judged, from one reading of
    the candidate headers and of whether the statements contradict each other."""
    if meaning.x is None or meaning.y is None:
        return None, None
    named = _Named(_candidates(meaning))
    if contradictory(meaning, named):
        return None, None
    swap = _swap(meaning, named)
    return swap, (_shift(meaning) if swap is None else None)


def judge_swap(meaning: Meaning) -> Judgement | None:
    """Swapped when some statement names the formulas' x as y (or y as x) and none agrees."""
    if meaning.x is None or meaning.y is None or contradictory(meaning):
        return None
    return _swap(meaning, _Named(_candidates(meaning)))


def _swap(meaning: Meaning, named: _Named) -> Judgement | None:
    """:func:`judge_swap` of words that do not contradict each other."""
    assert meaning.x is not None and meaning.y is not None
    swapped: list[Cue] = []
    for statement in meaning.statements:
        says_y = named.points_at(statement.y_words)
        says_x = named.points_at(statement.x_words)
        rate = statement.factual  # a title's order is a convention: weak
        agree = (says_y and says_y[0] is meaning.y) or (says_x and says_x[0] is meaning.x)
        agree = agree or akin(statement.y_words, meaning.y.words - meaning.x.words)
        agree = agree or akin(statement.x_words, meaning.x.words - meaning.y.words)
        if agree:
            return None  # words that give the formulas' roles: no swap said consistently
        pair = (meaning.x, meaning.y)
        if any(said is not None and said[0] not in pair for said in (says_y, says_x)):
            continue  # a quantity the formulas do not read: not a swap of theirs
        if says_y and says_y[0] is meaning.x:
            swapped.append(Cue(statement, "y", tuple(says_y[1]), meaning.x, rate))
        if says_x and says_x[0] is meaning.y:
            swapped.append(Cue(statement, "x", tuple(says_x[1]), meaning.y, rate))
    if not swapped:
        return None
    return Judgement("xy-swapped", "", swapped, conventions=_conventions(meaning, swapped))


def _conventions(meaning: Meaning, cues: list[Cue]) -> list[str]:
    """The conventions (common practice) that agree with a swap: a title that names both
    quantities, y first; a table that puts the words' x before their y (left of it, or above
    it), as a scatter chart of two columns takes the first as x."""
    assert meaning.x is not None and meaning.y is not None
    said: list[str] = []
    for cue in cues:
        both = {c.role for c in cues if c.statement is cue.statement} == {"x", "y"}
        if cue.statement.strength == "title" and both:
            said.append(f"the title '{cue.statement.text}' names y first")
            break
    words_x, words_y = meaning.y.ref, meaning.x.ref  # the words' roles are the formulas' swapped
    same_table = words_x.sheet.lower() == words_y.sheet.lower() and (
        (words_x.cols == 1 and (words_x.r1, words_x.r2) == (words_y.r1, words_y.r2))
        or (words_x.rows == 1 and (words_x.c1, words_x.c2) == (words_y.c1, words_y.c2))
    )
    if same_table and said and (words_x.c1, words_x.r1) < (words_y.c1, words_y.r1):
        where = "left of" if words_x.cols == 1 else "above"
        said.append(f"the table puts '{meaning.y.text}' (x by the words) {where} "
                    f"'{meaning.x.text}'")  # fmt: skip
    return said


def judge_shift(meaning: Meaning) -> Judgement | None:
    """Shifted when statements name, for one role, a quantity beside its range and none names
    the range's own; the first role so named (y before x)."""
    if meaning.x is None or meaning.y is None or contradictory(meaning):
        return None
    return _shift(meaning)


def _shift(meaning: Meaning) -> Judgement | None:
    """:func:`judge_shift` of words that do not contradict each other."""
    assert meaning.x is not None and meaning.y is not None
    for role, own, other, near in (
        ("y", meaning.y, meaning.x, meaning.y_beside),
        ("x", meaning.x, meaning.y, meaning.x_beside),
    ):
        if not near:
            continue
        named = _Named([own, other, *near])
        cues: list[Cue] = []
        agreed = False
        for statement in meaning.statements:
            # The phrase of this role first, then the other one.
            phrases = [statement.y_words, statement.x_words][:: 1 if role == "y" else -1]
            named_own = [akin(own.words, words) for words in phrases]
            if named_own[0] or (statement.strength == "title" and named_own[1]):
                agreed = True  # the words name the range the formulas read
                continue
            if named_own[1]:
                continue  # a rate that gives the range read the other role: no shift of it
            cue = _shift_cue(statement, role, phrases, named)
            if cue is not None:
                cues.append(cue)
        meant = {cue.header.cell for cue in cues}
        if cues and not agreed and len(meant) == 1:
            return Judgement("range-shifted", role, cues, cues[0].header, own)
    return None


def _shift_cue(
    statement: Statement, role: str, phrases: list[frozenset[str]], named: _Named
) -> Cue | None:
    """What one statement says of a range beside ``named.candidates[0]`` (the range read; then
    the regression's other range, then the ranges beside); ``phrases``: the words of this role,
    then those of the other. A rate or a unit names the role by arithmetic (strong). A title
    names it by its order (weak), unless its other phrase names the regression's other range:
    then the quantity not read is named whatever the order (strong).
    """
    own, other = named.candidates[0], named.candidates[1]
    said = [named.points_at(words) for words in phrases]
    beside = [s for s in said if s is not None and s[0] is not own and s[0] is not other]
    if len(beside) != 1:
        return None
    header, matched = beside[0]
    names_other = said[1] is not None and said[1][0] is other
    if statement.factual:
        if said[0] is not beside[0] or (said[1] is not None and not names_other):
            return None  # the quantity beside on the other side of "per": roles say no shift
        return Cue(statement, role, tuple(matched), header, strong=True)
    names_other = any(s is not None and s[0] is other for s in said)
    in_order = said[0] is beside[0]
    if not (names_other or in_order):
        return None
    return Cue(statement, role, tuple(matched), header, strong=names_other)
