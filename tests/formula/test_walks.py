"""The walks over a formula's tree: ``walk`` meets every node parent first, children left to
right, as a plain recursive visit does; ``references`` and ``calls`` give the nodes of their kind
in that same order. Checked on generated formulas of every node kind, nested at random."""

from __future__ import annotations

import random

import pytest

from auditor.formula.syntax import (
    ArrayNode,
    Binary,
    Call,
    Node,
    Percent,
    Ref,
    RefNode,
    Unary,
    calls,
    parse,
    references,
    walk,
)
from auditor.formula.tokens import _split_outside_quotes


def _recursive(node: Node) -> list[Node]:
    """The straightforward pre-order visit the iterative walks must match."""
    out = [node]
    if isinstance(node, Call):
        kids: tuple[Node, ...] = node.args
    elif isinstance(node, Binary):
        kids = (node.left, node.right)
    elif isinstance(node, Unary | Percent):
        kids = (node.operand,)
    elif isinstance(node, ArrayNode):
        kids = tuple(item for row in node.rows for item in row)
    else:
        kids = ()
    for kid in kids:
        out.extend(_recursive(kid))
    return out


def _formula(rng: random.Random, depth: int) -> str:
    leaves = ["A1", "$B$2:B9", "Other!C3", "2.5", '"t"', "TRUE", "#N/A", "{1,2;3,4}", "D:D"]
    if depth == 0 or rng.random() < 0.25:
        return rng.choice(leaves)
    kind = rng.randrange(5)
    if kind == 0:
        args = ", ".join(_formula(rng, depth - 1) for _ in range(rng.randrange(1, 4)))
        return f"{rng.choice(['SUM', 'IF', 'SLOPE', 'ROUND'])}({args})"
    if kind == 1:
        op = rng.choice(["+", "-", "*", "/", "^", "&", "<="])
        return f"({_formula(rng, depth - 1)}{op}{_formula(rng, depth - 1)})"
    if kind == 2:
        return f"-{_formula(rng, depth - 1)}"
    if kind == 3:
        return f"{_formula(rng, depth - 1)}%"
    return f"INDEX({_formula(rng, depth - 1)}, 1)"


@pytest.mark.parametrize("seed", range(40))
def test_walks_match_a_recursive_visit(seed: int) -> None:
    rng = random.Random(seed)
    node = parse("=" + _formula(rng, rng.randrange(1, 6)), "Data")
    visited = _recursive(node)
    assert list(walk(node)) == visited
    assert references(node) == [n.ref for n in visited if isinstance(n, RefNode)]
    assert calls(node) == [n for n in visited if isinstance(n, Call)]


def test_references_in_order_with_repeats() -> None:
    node = parse("=SUM(A1, B2:B4) + A1 * -Other!C3%", "Data")
    assert [r.address for r in references(node)] == [
        "Data!A1",
        "Data!B2:B4",
        "Data!A1",
        "Other!C3",
    ]
    assert [c.name for c in calls(parse("=ROUND(SUM(A1), IF(B1, 1, 2))", "Data"))] == [
        "ROUND",
        "SUM",
        "IF",
    ]


def _split_char_by_char(text: str, sep: str) -> list[str]:
    """The straightforward split: one character at a time, each quote toggling."""
    parts, quoted, start = [], False, 0
    for i, char in enumerate(text):
        if char == "'":
            quoted = not quoted
        elif char == sep and not quoted:
            parts.append(text[start:i])
            start = i + 1
    parts.append(text[start:])
    return parts


@pytest.mark.parametrize("seed", range(30))
def test_splitting_outside_quotes_matches_a_character_walk(seed: int) -> None:
    rng = random.Random(seed)
    for _ in range(200):
        text = "".join(rng.choice("ab!:'' 1$") for _ in range(rng.randrange(0, 16)))
        for sep in "!:":
            assert _split_outside_quotes(text, sep) == _split_char_by_char(text, sep)
    assert _split_outside_quotes("'My Data'!$B$2:B9", "!") == ["'My Data'", "$B$2:B9"]
    assert _split_outside_quotes("'It''s:here'!A1:B2", ":") == ["'It''s:here'!A1", "B2"]


def test_references_are_kept_per_tree_and_not_part_of_it() -> None:
    a, b = Ref("Data", 1, 1, 4, 1), Ref("Data", 2, 2, 2, 2)
    node: Node = Binary("+", Call("SUM", (RefNode(a),)), RefNode(b))  # no parse cache holds it
    twin: Node = Binary("+", Call("SUM", (RefNode(a),)), RefNode(b))
    first = references(node)
    first.append(first[0])  # a caller's list is its own
    assert [r.address for r in references(node)] == ["Data!A1:A4", "Data!B2"]
    # Kept on the tree, outside its fields: equality, hashing and the printed form ignore it.
    assert node == twin and hash(node) == hash(twin) and repr(node) == repr(twin)
