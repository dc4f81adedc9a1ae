"""CompactCells.add_constants (a run of the reader's plain cells packed at once) leaves the
store exactly as add_constant cell by cell would, and both behave as a plain dict: generated
runs in and out of order, repeated keys, runs after the store became a dict, formulas between."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from auditor.read import compact
from auditor.read.compact import CompactCells
from auditor.read.numbers import packed_keys
from auditor.read.workbook import Cell, CellValue

values = st.one_of(
    st.integers(-5, 5), st.sampled_from([0.5, -0.0, 1e300]), st.sampled_from(["t", ""])
)
cells = st.tuples(
    st.integers(1, 40), st.integers(1, 4), values, st.sampled_from(["General", "0.00", "0%"])
)
runs = st.lists(
    st.tuples(st.booleans(), st.lists(cells, max_size=12)),  # (sorted?, the cells)
    max_size=6,
)
Run = list[tuple[int, int, CellValue, str]]


def _in_order(run: Run) -> Run:
    """The run sorted by position, each position once (the shape the reader hands over)."""
    return sorted({(row, col): (row, col, v, f) for row, col, v, f in run}.values())


@settings(max_examples=300, deadline=None)
@given(runs, st.booleans())
def test_runs_added_at_once_are_the_cells_added_one_by_one(
    generated: list[tuple[bool, Run]], formula_between: bool
) -> None:
    at_once, one_by_one = CompactCells("S"), CompactCells("S")
    plain: dict[tuple[int, int], Cell] = {}
    for number, (ordered, run) in enumerate(generated):
        run = _in_order(run) if ordered else run
        rows, cols = [c[0] for c in run], [c[1] for c in run]
        at_once.add_constants(packed_keys(rows, cols), [c[2] for c in run], [c[3] for c in run])
        for row, col, value, number_format in run:
            one_by_one.add_constant(row, col, value, number_format)
            plain[(row, col)] = Cell("S", row, col, value, None, number_format)
        if formula_between:
            key = (41 + number, 1)
            cell = Cell("S", key[0], 1, 3.0, "=1+2")
            at_once[key] = one_by_one[key] = plain[key] = cell
    assert (at_once._dict is None) == (one_by_one._dict is None)
    for store in (at_once, one_by_one):
        assert list(store.items()) == list(plain.items())
        assert [type(c.value) for c in store.values()] == [type(c.value) for c in plain.values()]
        assert all(store.get(key) == cell for key, cell in plain.items())
    if at_once._dict is None:
        assert list(at_once._keys) == list(one_by_one._keys)
        assert list(at_once.stored_cells()) == list(one_by_one.stored_cells())


def test_a_full_format_table_keeps_the_cells_as_objects(monkeypatch: pytest.MonkeyPatch) -> None:
    """Past the last format index a cell is held as its object, at once as one by one."""
    monkeypatch.setattr(compact, "_OBJECT", 2)  # room for two formats
    at_once, one_by_one = CompactCells("S"), CompactCells("S")
    formats = ["General", "0.00", "0%", "0.0"]
    at_once.add_constants(packed_keys([1, 2, 3, 4], [1, 1, 1, 1]), [1, 2, 3, 4], formats)
    for row in range(1, 5):
        one_by_one.add_constant(row, 1, row, formats[row - 1])
    assert list(at_once.items()) == list(one_by_one.items())
    assert [c.number_format for c in at_once.values()] == formats
    assert len(list(at_once.stored_cells())) == len(list(one_by_one.stored_cells())) == 2
