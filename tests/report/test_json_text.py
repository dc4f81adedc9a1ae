"""audit.json's text is what the standard library's ``json.dumps(indent=2, ensure_ascii=False,
allow_nan=False)`` writes (the reference here), byte for byte, including what it refuses."""

from __future__ import annotations

import json
import math
import random

import numpy as np
import pytest
from test_report_xlsx_support import fixture_audit

from auditor.report.common import plain
from auditor.report.json import audit_document
from auditor.report.json_text import indented_json, plain_indented_json


def _reference(document: object) -> str:
    return json.dumps(document, indent=2, sort_keys=False, allow_nan=False, ensure_ascii=False)


SAMPLES: list[object] = [
    {},
    [],
    "",
    0,
    {"a": [], "b": {}, "c": [[]], "d": [{}]},
    {"text": 'é "quoted" \\ back\nnew\ttab \u2028 \x00 ☃', "": None},
    [1, -0.0, 0.1, 1e-310, 1e300, 2**70, -(2**63), True, False, None],
    {"nested": {"deeper": {"list": [1.5, "x", {"k": (1, 2)}]}}},
    {3: "integer key", 2.5: "float key", None: "null key", True: "logical key"},
]


@pytest.mark.parametrize("document", SAMPLES)
def test_written_as_the_standard_library_writes_it(document: object) -> None:
    assert indented_json(document) == _reference(document)


def test_generated_documents_are_written_the_same() -> None:
    chooser = random.Random(14)

    def value(depth: int) -> object:
        kind = chooser.randrange(8 if depth < 4 else 5)
        if kind == 0:
            return chooser.choice([None, True, False])
        if kind == 1:
            return chooser.randint(-(10**20), 10**20)
        if kind == 2:
            return chooser.uniform(-1e6, 1e6) * 10 ** chooser.randint(-300, 300)
        if kind in (3, 4):
            return "".join(chooser.choice('ab"\\\n\té☃ ') for _ in range(chooser.randrange(6)))
        if kind == 5:
            return [value(depth + 1) for _ in range(chooser.randrange(4))]
        return {f"k{i}": value(depth + 1) for i in range(chooser.randrange(4))}

    for _ in range(300):
        document = value(0)
        assert indented_json(document) == _reference(document)


def test_the_fixture_audit_is_written_the_same() -> None:
    document = audit_document(fixture_audit())
    assert indented_json(document) == _reference(document)


def test_non_finite_numbers_and_unknown_values_are_refused_as_before() -> None:
    for bad in ({"p": math.nan}, [math.inf], {"v": object()}):
        with pytest.raises((ValueError, TypeError)) as ours:
            indented_json(bad)
        with pytest.raises((ValueError, TypeError)) as theirs:
            _reference(bad)
        assert type(ours.value) is type(theirs.value)


class Label(str):
    """A key whose str() is not its text (plain() writes the str())."""

    def __str__(self) -> str:
        return "label " + super().__str__()


def _plain_reference(document: object) -> str:
    return indented_json(plain(document))


def test_one_walk_writes_what_plain_then_indented_json_write() -> None:
    chooser = random.Random(15)

    def value(depth: int) -> object:
        kind = chooser.randrange(11 if depth < 4 else 7)
        if kind == 0:
            return chooser.choice([None, True, False, math.nan, -math.inf, math.inf])
        if kind == 1:
            return chooser.choice([np.float64(chooser.random()), np.int64(7), np.bool_(True)])
        if kind == 2:
            return chooser.uniform(-1e6, 1e6) * 10 ** chooser.randint(-300, 300)
        if kind == 3:
            return chooser.choice([np.float64(math.nan), chooser.randint(-(10**20), 10**20)])
        if kind in (4, 5, 6):
            return "".join(chooser.choice('ab"\\\n\té☃ ') for _ in range(chooser.randrange(6)))
        if kind == 7:
            return np.array([[1.5, math.nan], [2.0, 3.0]])[: chooser.randrange(3)]
        if kind == 8:
            return tuple(value(depth + 1) for _ in range(chooser.randrange(4)))
        if kind == 9:
            return [value(depth + 1) for _ in range(chooser.randrange(4))]
        keys: list[object] = [f"k{i}" for i in range(chooser.randrange(4))]
        if chooser.random() < 0.3:  # keys plain() turns into text, two of them into the same
            keys += chooser.choice([[1, "1", 2.5, None], [Label("dark"), "label dark"]])
        return {key: value(depth + 1) for key in keys}

    for _ in range(400):
        document = value(0)
        assert plain_indented_json(document) == _plain_reference(document)


def test_one_walk_writes_the_fixture_audit_the_same() -> None:
    document = fixture_audit().to_dict()
    assert plain_indented_json(document) == _plain_reference(document)


def test_one_walk_refuses_unknown_values_as_before() -> None:
    for bad in ({"v": object()}, [1, {2: {1, 2}}]):
        with pytest.raises(TypeError):
            plain_indented_json(bad)
        with pytest.raises(TypeError):
            _plain_reference(bad)
