"""A Cell is a named tuple filled in C; it must read, compare and hash as the frozen dataclass
it replaced, stay immutable, and name its cell as the grid helpers do."""

from __future__ import annotations

import dataclasses
import pickle

import pytest
from hypothesis import given
from hypothesis import strategies as st

from auditor.grid import column_letter
from auditor.read.sheet import built_cell
from auditor.read.workbook import Cell, CellValue, ErrorValue


@dataclasses.dataclass(frozen=True, slots=True)
class FormerCell:
    """The former definition, kept here as the reference."""

    sheet: str
    row: int
    col: int
    value: CellValue
    formula: str | None = None
    number_format: str = "General"
    array_ref: str | None = None


values = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-3, 3),
    st.sampled_from([0.0, -0.0, 1.0, 2.5]),
    st.sampled_from(["", "x", "1"]),
    st.sampled_from([ErrorValue("#N/A"), ErrorValue("#DIV/0!")]),
)
fields = st.tuples(
    st.sampled_from(["Data", "Fit"]),
    st.integers(1, 3),
    st.sampled_from([1, 2, 26, 27, 702, 703, 16_384]),
    values,
    st.sampled_from([None, "=A1", "=SLOPE(B2:B9,A2:A9)"]),
    st.sampled_from(["General", "0.00"]),
    st.sampled_from([None, "E2:F6"]),
)


@given(fields, fields)
def test_cells_compare_and_hash_as_the_dataclass_did(
    first: tuple[object, ...], second: tuple[object, ...]
) -> None:
    one, other = Cell(*first), built_cell(*second)  # type: ignore[arg-type]
    former_one, former_other = FormerCell(*first), FormerCell(*second)  # type: ignore[arg-type]
    assert (one == other) is (former_one == former_other)
    assert (one != other) is (former_one != former_other)
    if one == other:
        assert hash(one) == hash(other)
    assert hash(one) == hash(former_one)
    for field in dataclasses.fields(FormerCell):
        assert getattr(one, field.name) == getattr(former_one, field.name)
        assert type(getattr(one, field.name)) is type(getattr(former_one, field.name))
    assert "Former" + repr(one) == repr(former_one)
    assert pickle.loads(pickle.dumps(one)) == one


@given(fields)
def test_built_cells_are_the_cells_the_constructor_makes(found: tuple[object, ...]) -> None:
    made = built_cell(*found)  # type: ignore[arg-type]
    assert type(made) is Cell
    assert made == Cell(*found)  # type: ignore[arg-type]
    sheet, row, col = found[:3]
    assert made.coord == f"{column_letter(col)}{row}"  # type: ignore[arg-type]
    assert made.address == f"{sheet}!{column_letter(col)}{row}"  # type: ignore[arg-type]


def test_cells_cannot_be_changed_and_keep_their_defaults() -> None:
    cell = Cell("Data", 4, 2, 1.5)
    assert (cell.formula, cell.number_format, cell.array_ref) == (None, "General", None)
    with pytest.raises(AttributeError):
        cell.value = 2.0  # type: ignore[misc]
    assert cell._replace(value=2.0) == Cell("Data", 4, 2, 2.0)
    assert cell.value == 1.5
    assert Cell(sheet="Data", row=4, col=2, value=1.5) == cell
