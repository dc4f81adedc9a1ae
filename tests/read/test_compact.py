"""The compact cell store behaves as the dict of cells it replaces.

Two kinds of evidence: the store against a plain dict under the same operations (insertion in
and out of order, replacement, removal, look-ups of absent keys), and whole readings and audits
with the store forced on every sheet (threshold 0) against the ordinary reading: the same cells
in the same order, the same audit JSON.
"""

from __future__ import annotations

import json
import random
from pathlib import Path

import pytest

from auditor.pipeline.audit import audit_workbook
from auditor.policy import load_policy
from auditor.read import compact
from auditor.read.compact import CompactCells
from auditor.read.equality import workbook_differences
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell, ErrorValue

ROOT = Path(__file__).resolve().parents[2]


def _cell(row: int, col: int, value: object, formula: str | None = None) -> Cell:
    return Cell("S", row, col, value, formula, "0.00" if col % 2 else "General")  # type: ignore[arg-type]


def _fill(store: CompactCells, plain: dict[tuple[int, int], Cell], cells: list[Cell]) -> None:
    for cell in cells:
        if cell.formula is None:
            store.add_constant(cell.row, cell.col, cell.value, cell.number_format)
        else:
            store[(cell.row, cell.col)] = cell
        plain[(cell.row, cell.col)] = cell


def _assert_like(store: CompactCells, plain: dict[tuple[int, int], Cell]) -> None:
    assert len(store) == len(plain)
    assert list(store) == list(plain)  # insertion order, as a dict keeps it
    assert list(store.items()) == list(plain.items())
    assert list(store.values()) == list(plain.values())
    for key, cell in plain.items():
        assert store[key] == cell and store.get(key) == cell and key in store
    for absent in ((0, 1), (1, 0), (10**7, 3), (2, 16385), (-1, 2), "A1"):
        assert absent not in store
        assert store.get(absent) is None  # type: ignore[arg-type]
    with pytest.raises(KeyError):
        store[(10**7, 3)]


def test_in_order_cells_are_kept_packed_and_read_back() -> None:
    store, plain = CompactCells("S"), {}
    cells = [
        _cell(r, c, v)
        for r in range(1, 200)
        for c, v in ((1, r * 0.5), (2, r), (5, f"t{r}"), (16384, True))
    ]
    cells.append(_cell(200, 3, 1.0, "=SUM(A1:A199)"))
    cells.append(_cell(201, 1, ErrorValue("#N/A")))
    _fill(store, plain, cells)
    assert store._dict is None  # still packed
    _assert_like(store, plain)
    store[(2, 2)] = _cell(2, 2, 7, "=1+6")  # replaced in place, order kept
    plain[(2, 2)] = _cell(2, 2, 7, "=1+6")
    assert store._dict is None
    _assert_like(store, plain)


def test_out_of_order_and_removal_turn_the_store_into_a_dict() -> None:
    rng = random.Random(7)
    store, plain = CompactCells("S"), dict[tuple[int, int], Cell]()
    cells = [_cell(rng.randint(1, 50), rng.randint(1, 6), rng.random()) for _ in range(300)]
    _fill(store, plain, cells)
    assert store._dict is not None  # a key before the last one
    _assert_like(store, plain)
    ordered, plain2 = CompactCells("S"), {}
    _fill(ordered, plain2, [_cell(r, 1, r) for r in range(1, 30)])
    assert ordered.pop((3, 1)) == plain2.pop((3, 1))
    assert ordered._dict is not None
    _assert_like(ordered, plain2)


@pytest.fixture
def forced(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(compact, "COMPACT_PART_BYTES", 0)


SAMPLES = sorted((ROOT / "fixtures" / "workbooks").glob("*.xlsx"))[:24]


@pytest.mark.usefixtures("forced")
def test_readings_with_the_store_are_the_dict_readings() -> None:
    for path in sorted((ROOT / "fixtures").rglob("*.xlsx")):
        packed = read_workbook(path)
        assert all(isinstance(s.cells, CompactCells) for s in packed.sheets.values())
        assert workbook_differences(read_workbook(path, engine="lxml"), packed) == []


def test_audits_with_the_store_are_the_same(monkeypatch: pytest.MonkeyPatch) -> None:
    policy = load_policy("general")
    plain = [json.dumps(audit_workbook(p, policy).to_dict(), default=str) for p in SAMPLES]
    monkeypatch.setattr(compact, "COMPACT_PART_BYTES", 0)
    packed = [json.dumps(audit_workbook(p, policy).to_dict(), default=str) for p in SAMPLES]
    assert len(SAMPLES) == 24 and packed == plain


def test_the_equality_check_sees_every_kind_of_difference() -> None:
    """The proof above relies on workbook_differences; it must notice what == would miss."""

    base = read_workbook(SAMPLES[0])
    sheet_name, sheet = next(iter(base.sheets.items()))
    key, cell = next(iter(sheet.cells.items()))

    def changed(**what: object) -> list[str]:
        other = read_workbook(SAMPLES[0])
        target = other.sheets[sheet_name]
        for name, value in what.items():
            if name == "cell":
                target.cells[key] = value  # type: ignore[assignment]
            elif name == "drop":
                del target.cells[key]
            elif name == "extent":
                target.max_row += 1
            else:
                setattr(other, name, value)
        return workbook_differences(base, other, most=1)

    assert workbook_differences(base, read_workbook(SAMPLES[0])) == []
    assert changed(cell=cell._replace(value=True if cell.value == 1 else 1))
    assert changed(cell=cell._replace(number_format="0.0000"))
    assert any("cells vs" in d for d in changed(drop=True))
    assert any("extent" in d for d in changed(extent=True))
    assert changed(names=[]) == ["names differ"] or not base.names
    assert changed(stored_values=not base.stored_values) == ["stored values differ"]
    assert changed(sheets={}) == [f"sheets {list(base.sheets)} vs []"]


def test_a_column_slice_gives_each_cells_stored_value_as_reading_cell_by_cell() -> None:
    rng = random.Random(7)
    store, plain = CompactCells("S"), dict[tuple[int, int], Cell]()
    cells = [
        _cell(
            r, c, rng.choice([r * 0.25, r, "t", None, True]), "=1+1" if rng.random() < 0.1 else None
        )
        for r in range(2, 300)
        for c in (1, 2, 4, 5, 16384)
        if c == 5 or rng.random() < 0.8  # column 5 complete: the slice is every cell
    ]
    _fill(store, plain, cells)
    checked = ((1, 1, 310), (2, 2, 2), (4, 150, 299), (16384, 1, 5), (3, 1, 50), (5, 2, 299))
    for col, first, last in checked:
        expected = [
            plain[(r, col)].value if (r, col) in plain else None for r in range(first, last + 1)
        ]
        assert store.column_values(col, first, last) == expected
    assert store.column_values(0, 1, 3) == [None] * 3
    assert store.column_values(16385, 1, 3) == [None] * 3
    assert CompactCells("S").column_values(1, 1, 2) == [None, None]
    store.add_constant(1, 1, 9.0, "General")  # out of order: the store becomes a dict
    assert store.column_values(1, 1, 3) is None
