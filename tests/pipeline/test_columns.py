"""Packed columns of the ledger: every value comes back bit for bit and of the same type."""

from __future__ import annotations

import json
import math
import struct
from dataclasses import dataclass

from auditor.pipeline.columns import pack_column, pack_records, unpack_column, unpack_rows


@dataclass
class _Row:
    row: int
    x: list[float | None]
    y: float | None
    used: bool
    reason: str


def _round_trip(values: list[object]) -> list[object]:
    packed = json.loads(json.dumps(pack_column(values)))
    return unpack_column(packed, len(values))


def _bits(value: object) -> object:
    return struct.pack("<d", value) if isinstance(value, float) else value


def test_floats_and_empty_cells_come_back_bit_for_bit() -> None:
    values: list[object] = [0.1, None, -0.0, 1e-310, math.inf, -math.inf, 2.0**60 + 0.5, None]
    back = _round_trip(values)
    assert [type(v) for v in back] == [type(v) for v in values]
    assert [_bits(v) for v in back] == [_bits(v) for v in values]
    assert isinstance(pack_column(values), dict)


def test_nan_stays_nan() -> None:
    (back,) = _round_trip([math.nan])
    assert isinstance(back, float) and math.isnan(back)


def test_integers_logicals_and_text_are_kept_as_json_writes_them() -> None:
    samples: list[list[object]] = [[1, 2, 3], [1.5, 2], [True, False], ["", "outside range"]]
    for values in samples:
        assert pack_column(values) == values
        assert _round_trip(values) == values
        assert [type(v) for v in _round_trip(values)] == [type(v) for v in values]


def test_lists_of_one_width_are_packed_and_others_kept() -> None:
    pairs: list[object] = [[1.5, None], [2.5, 3.5], [None, -1.0]]
    assert pack_column(pairs)["width"] == 2
    assert _round_trip(pairs) == pairs
    ragged: list[object] = [[1.5], [2.5, 3.5]]
    assert pack_column(ragged) == ragged
    with_int: list[object] = [[1.5], [2]]
    assert pack_column(with_int) == with_int


def test_a_table_comes_back_row_by_row() -> None:
    rows = [_Row(7, [1.0], 2.5, True, ""), _Row(8, [None], None, False, "text in x")]
    names = ["row", "x", "y", "used", "reason"]
    table = json.loads(json.dumps(pack_records(names, rows)))
    assert unpack_rows(table) == [[getattr(row, name) for name in names] for row in rows]
    empty = json.loads(json.dumps(pack_records(["row", "x"], [])))
    assert unpack_rows(empty) == []


def test_the_packed_bytes_are_little_endian_doubles_as_struct_writes_them() -> None:
    # Generated variety: ordinary, tiny, huge, subnormal and signed-zero doubles, empty cells.
    import base64
    import random

    pick = random.Random(14)
    specials = [0.0, -0.0, 5e-324, -2.2250738585072014e-308, 1.7976931348623157e308, math.inf]
    for size in (1, 2, 7, 500):
        values: list[float | None] = [
            pick.choice(specials)
            if pick.random() < 0.2
            else None
            if pick.random() < 0.1
            else pick.uniform(-1e6, 1e6) * 10.0 ** pick.randint(-300, 300)
            for _ in range(size)
        ]
        expected = b"".join(struct.pack("<d", 0.0 if v is None else v) for v in values)
        packed = pack_column(values)
        assert base64.b64decode(packed["f8"]) == expected
        assert packed["none"] == [i for i, v in enumerate(values) if v is None]
        assert [_bits(v) for v in _round_trip(list(values))] == [_bits(v) for v in values]
        rows = [[v] for v in values]  # one x column
        assert base64.b64decode(pack_column(rows)["f8"]) == expected
        assert _round_trip(list(rows)) == [[v] for v in _round_trip(list(values))]


def test_records_packed_as_each_column_alone() -> None:
    # Generated variety: tables of 0, 1, 2 and many rows, one field or several.
    import random
    from operator import attrgetter

    pick = random.Random(7)
    for count in (0, 1, 2, 57):
        rows = [
            _Row(i, [pick.random()], pick.choice([None, pick.random()]), pick.random() < 0.5, "")
            for i in range(count)
        ]
        for names in (("row", "x", "y", "used", "reason"), ("y",), ("x", "y")):
            plain = [pack_column(list(map(attrgetter(name), rows))) for name in names]
            assert pack_records(names, rows)["columns"] == plain
            assert pack_records(names, rows)["count"] == count
