"""One parse serving every sheet a text is written on (auditor.formula.templates): the tree a
template gives on a sheet equals, node for node, the tree parsing the text anew there gives, on
generated formulas (cells, ranges, whole columns and rows, sheet prefixes, defined names with
sheet scope, calls, arrays, operators, long chains) over workbooks whose sheets differ in size
and in the case of their names."""

from __future__ import annotations

import random
from collections.abc import Iterator

import pytest

from auditor.errors import FormulaError
from auditor.formula import syntax, templates
from auditor.formula.parser import _Context, _parse_now
from auditor.formula.syntax import ArrayNode, Node, children, parse, walk
from auditor.read.workbook import DefinedName, Sheet, Workbook


def _book(rng: random.Random) -> Workbook:
    names = rng.sample(["Data", "Fit", "Sensor 1", "Sensor 2", "O'Brien"], 3)
    sheets = {
        name: Sheet(name, max_row=rng.randrange(1, 900), max_col=rng.randrange(1, 30))
        for name in names
    }
    defined = [
        DefinedName("rate", f"'{names[0]}'!$B$2"),
        DefinedName(
            "rate", f"'{names[1].replace(chr(39), chr(39) * 2)}'!$C$3:$C$9", scope=names[1]
        ),
        DefinedName("level", "0.05"),
    ]
    return Workbook("mem.xlsx", "", sheets, defined, True)


def _operand(rng: random.Random, sheets: list[str]) -> str:
    roll = rng.random()
    col = rng.choice("ABCDE")
    row = rng.randrange(1, 60)
    if roll < 0.35:
        return f"{rng.choice(['', '$'])}{col}{rng.choice(['', '$'])}{row}"
    if roll < 0.6:
        return f"{col}{row}:{col}{row + rng.randrange(0, 40)}"
    if roll < 0.67:
        return f"{col}:{rng.choice('EFG')}"  # whole columns: the sheet's extent
    if roll < 0.7:
        return f"{row}:{row + 2}"  # whole rows
    if roll < 0.8:
        sheet = rng.choice(sheets)
        return f"'{sheet.replace(chr(39), chr(39) * 2)}'!{col}{row}"
    if roll < 0.86:
        return rng.choice(["rate", "level", "nowhere"])  # defined, scoped, undefined
    if roll < 0.93:
        return str(rng.choice([1, 2.5, 0.05, 1e3]))
    return rng.choice(['"text"', "TRUE", "#N/A", "{1,2;3,4}"])


def _formula(rng: random.Random, sheets: list[str], depth: int = 0) -> str:
    roll = rng.random()
    if depth > 3 or roll < 0.35:
        return _operand(rng, sheets)
    if roll < 0.6:
        name = rng.choice(["SLOPE", "SUM", "_xlfn.T.DIST.2T", "IFERROR", "ROUND"])
        count = rng.randrange(1, 4)
        return f"{name}({','.join(_formula(rng, sheets, depth + 1) for _ in range(count))})"
    if roll < 0.85:
        op = rng.choice(["+", "-", "*", "/", "^", "&", "<>"])
        return f"{_formula(rng, sheets, depth + 1)}{op}{_formula(rng, sheets, depth + 1)}"
    if roll < 0.92:
        return f"-({_formula(rng, sheets, depth + 1)})%"
    return "+".join(f"A{i}" for i in range(1, rng.randrange(2, 400)))  # a long chain


def _shape(node: Node) -> list[tuple[object, ...]]:
    """The tree node by node, parents first (``walk`` is iterative: == on a chain of four
    hundred additions nests too deep), each with its own fields and its number of children."""
    out: list[tuple[object, ...]] = []
    for each in walk(node):
        own = {k: v for k, v in vars(each).items() if k not in ("args", "left", "right")}
        own.pop("_references", None)  # kept on a tree once asked for: not fields
        own.pop("_moved_from", None)
        own.pop("operand", None)
        if isinstance(each, ArrayNode):
            own = {"shape": [len(row) for row in each.rows]}
        out.append((type(each).__name__, repr(own), len(children(each))))
    return out


def _anew(text: str, sheet: str, workbook: Workbook | None) -> list[tuple[object, ...]] | str:
    try:
        return _shape(_parse_now(_Context(text, sheet, workbook)))
    except FormulaError as exc:
        return str(exc)


def _through_templates(
    text: str, sheet: str, workbook: Workbook | None
) -> list[tuple[object, ...]] | str:
    try:
        return _shape(parse(text, sheet, workbook))
    except FormulaError as exc:
        return str(exc)


def _cases(seed: int) -> Iterator[tuple[str, str, Workbook | None]]:
    rng = random.Random(seed)
    books = [_book(rng) for _ in range(3)]
    for _ in range(15):
        text = "=" + _formula(rng, ["Data", "Fit", "Sensor 1", "Elsewhere"])
        for workbook in books:
            for sheet in list(workbook.sheets) + ["data", "Missing"]:
                yield text, sheet, workbook
        for sheet in ("Data", "Sensor 2", "data"):
            yield text, sheet, None  # parsed without a workbook: names stay names


@pytest.mark.parametrize("seed", range(10))
def test_a_template_gives_the_tree_parsing_anew_gives(seed: int) -> None:
    templates.clear()
    syntax._parse_free.cache_clear()
    for text, sheet, workbook in _cases(seed):
        assert _through_templates(text, sheet, workbook) == _anew(text, sheet, workbook), (
            text,
            sheet,
        )


def test_a_portable_text_is_parsed_once_and_rebound_elsewhere() -> None:
    templates.clear()
    workbook = Workbook(
        "mem.xlsx", "", {n: Sheet(n, max_row=9, max_col=3) for n in ("One", "Two")}, [], True
    )
    first = parse("=SLOPE(B3:B9,A3:A9)+E1", "One", workbook)
    kept = templates.template("=SLOPE(B3:B9,A3:A9)+E1")
    assert kept is not None and kept.sheet == "One" and kept.node is first
    second = parse("=SLOPE(B3:B9,A3:A9)+E1", "two", workbook)  # the workbook's spelling: Two
    assert second == _parse_now(_Context("=SLOPE(B3:B9,A3:A9)+E1", "two", workbook))
    assert {ref.sheet for ref in _refs(second)} == {"Two"}
    # a whole column reads the sheet's extent; a prefix or a name reads the workbook: not kept
    for text in ("=SUM(A:A)", "=Two!A1*2", "=rate*2"):
        parse(text, "One", workbook)
        assert templates.template(text) is None


def _refs(node: Node) -> list[object]:
    from auditor.formula.syntax import references

    return list(references(node))


def test_the_kept_templates_are_bounded_in_number_and_in_length(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    templates.clear()
    monkeypatch.setattr(templates, "MAX_TEMPLATES", 3)
    workbook = Workbook("mem.xlsx", "", {"One": Sheet("One", max_row=9, max_col=3)}, [], True)
    for i in range(1, 6):
        parse(f"=A{i}*2", "One", workbook)
    kept = [templates.template(f"=A{i}*2") is not None for i in range(1, 6)]
    assert kept == [False, False, False, True, True]  # emptied when full, then two kept
    long = "=" + "+".join(f"B{i}" for i in range(1, 200))  # over MAX_TEXT characters
    assert len(long) > templates.MAX_TEXT
    parse(long, "One", workbook)
    assert templates.template(long) is None
