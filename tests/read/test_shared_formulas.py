"""A shared formula moved by its template (auditor.read.shared_formulas) reads as openpyxl's
``Translator.translate_formula`` gives it, or fails as it fails.

Outside reference: openpyxl's ``Translator`` (what the reader used before, and what openpyxl's
own load does). Evidence: generated formulas mixing every kind of reference the translator
tells apart (cells with and without ``$``, lower case, ranges, whole rows and columns, chained
ranges, sheet-qualified and quoted, names, names after a sheet, structured references) with
strings, numbers, errors and functions, moved to destinations that keep them on the sheet and
destinations that push a row above 1 or a column before A or beyond ZZZ.
"""

from __future__ import annotations

import random
from collections import Counter
from collections.abc import Callable

from openpyxl.formula.translate import Translator

from auditor.grid import column_letter
from auditor.read.shared_formulas import SharedFormula, _moved


def _letters(rng: random.Random) -> str:
    number = rng.choice([1, 2, 3, 26, 27, 52, 702, 703, 16384, 18278, rng.randint(1, 18278)])
    letters = column_letter(number)
    return letters.lower() if rng.random() < 0.1 else letters


def _cell(rng: random.Random) -> str:
    row = rng.choice([1, 2, 3, 10, 1048576, rng.randint(1, 1048576)])
    return f"{'$' * (rng.random() < 0.3)}{_letters(rng)}{'$' * (rng.random() < 0.3)}{row}"


def _reference(rng: random.Random) -> str:
    kind = rng.randrange(9)
    if kind == 0:
        return _cell(rng)
    if kind == 1:
        return f"{_cell(rng)}:{_cell(rng)}"
    if kind == 2:
        first, last = sorted(rng.sample(range(1, 40), 2))
        return f"{'$' * (rng.random() < 0.3)}{first}:{'$' * (rng.random() < 0.3)}{last}"
    if kind == 3:
        return f"{'$' * (rng.random() < 0.3)}{_letters(rng)}:{_letters(rng)}"
    if kind == 4:
        return f"{_cell(rng)}:{_cell(rng)}:{_cell(rng)}"
    if kind == 5:
        sheet = rng.choice(["Data", "'Run data'!", "'it''s'", "[1]Sheet1"]).rstrip("!")
        return f"{sheet}!{_reference(rng)}"
    if kind == 6:
        return rng.choice(["Rate", "Data!rate", "A1:Rate", "Rate:B2", "_xlnm.Print_Area"])
    if kind == 7:
        return rng.choice(["Readings[Volts]", "Readings[[#This Row],[Volts]]"])
    return rng.choice(["A0", "XFE1", "A1B2", "$$A1"])


def _formula(rng: random.Random) -> str:
    parts = []
    for _ in range(rng.randint(1, 5)):
        kind = rng.random()
        if kind < 0.6:
            parts.append(_reference(rng))
        elif kind < 0.7:
            parts.append(f"SUM({_reference(rng)},{_reference(rng)})")
        elif kind < 0.8:
            parts.append(rng.choice(['"A1"', "2.5", "TRUE", "#REF!", "{1,2;3,4}", '"a""b"']))
        else:
            parts.append(f"({_reference(rng)})")
    return "=" + rng.choice(["+", "*", "&", "-", ","]).join(parts)


def _outcome(call: Callable[..., object], *arguments: object) -> tuple[str, str]:
    try:
        return "text", str(call(*arguments))
    except Exception as exc:  # the reference raises several types
        return type(exc).__name__, str(exc)


def test_moved_as_openpyxl_moves_them() -> None:
    rng = random.Random(14)
    outcomes: Counter[str] = Counter()
    for _ in range(3000):
        formula = _formula(rng)
        row, col = rng.randint(1, 50), rng.randint(1, 60)
        anchor = f"{column_letter(col)}{row}"
        made = _outcome(SharedFormula, formula, row, col)
        reference = _outcome(Translator, formula, anchor)
        assert made[0] == reference[0], formula
        if made[0] != "text":
            outcomes["not tokenised"] += 1
            continue
        shared, translator = SharedFormula(formula, row, col), Translator(formula, anchor)
        for _ in range(4):
            to_row = max(1, row + rng.choice([-60, -3, -1, 0, 1, 7, 1000]))
            to_col = min(16384, max(1, col + rng.choice([-70, -2, 0, 1, 5, 16000])))
            got = _outcome(shared.at, to_row, to_col)
            want = _outcome(translator.translate_formula, f"{column_letter(to_col)}{to_row}")
            assert got == want, (formula, anchor, to_row, to_col)
            outcomes[got[0]] += 1
    # Both endings are exercised, and most formulas move.
    assert outcomes["text"] > 5000 and outcomes["TranslatorError"] > 500, outcomes


def test_cells_of_a_group_keep_moving_as_openpyxl_moves_them() -> None:
    """One group over many cells (its columns moved once per column offset and reused, rows
    per cell), each cell compared with openpyxl's Translator and with the piece-by-piece
    definition; the tokens' moved texts likewise."""
    rng = random.Random(41)
    for _ in range(300):
        formula = _formula(rng)
        row, col = rng.randint(1, 50), rng.randint(1, 60)
        try:
            shared = SharedFormula(formula, row, col)
        except Exception:  # the tokenizer refuses it: test_moved_as_openpyxl_moves_them
            continue
        translator = Translator(formula, f"{column_letter(col)}{row}")
        columns = [min(16384, max(1, col + rng.choice([-70, -1, 0, 2, 16000]))) for _ in range(3)]
        for _ in range(30):
            to_row = max(1, row + rng.choice([-60, -2, 0, 1, 9, 1048570]))
            to_col = rng.choice(columns)
            got = _outcome(shared.at, to_row, to_col)
            want = _outcome(translator.translate_formula, f"{column_letter(to_col)}{to_row}")
            assert got == want, (formula, row, col, to_row, to_col)
            if shared.fixed is None:
                by_piece = _outcome(_moved, shared.pieces, to_row - row, to_col - col)
                assert got == by_piece
            if got[0] == "text":
                moved = "".join(token.value for token in shared.tokens_at(to_row, to_col))
                assert "=" + moved == got[1] or moved == got[1]


def test_a_known_formula() -> None:
    shared = SharedFormula("=SUM($A2:B2)*Data!C$1+Rate/'x y'!D:D", 2, 5)
    assert shared.at(4, 6) == "=SUM($A4:C4)*Data!D$1+Rate/'x y'!E:E"
    assert shared.at(2, 5) == "=SUM($A2:B2)*Data!C$1+Rate/'x y'!D:D"
    assert SharedFormula('="text"', 1, 1).at(9, 9) == '="text"'
