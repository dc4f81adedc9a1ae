"""cells_in: the cells inside a box, by probing (a small box) or by one walk (a large one); and
the window of words around a result block, read through the text index (TextCells), equal to
the window the probes give on generated workbooks and on the fixtures."""

from __future__ import annotations

import random
from pathlib import Path

import xlsxwriter

from auditor.design.inputs import WINDOW_COLS, WINDOW_ROWS, DesignInputReader
from auditor.design.window import cells_in
from auditor.evaluation.evaluator import Evaluator
from auditor.locate.locator import Locator, locate
from auditor.read.open import read_workbook
from auditor.read.workbook import Cell


def _grid(seed: int) -> dict[tuple[int, int], Cell]:
    rng = random.Random(seed)
    places = {(rng.randint(1, 40), rng.randint(1, 12)) for _ in range(150)}
    return {(r, c): Cell("Oven", r, c, float(r * c)) for r, c in places}


def test_a_box_gives_exactly_the_cells_inside_it_either_way() -> None:
    for seed in range(30):
        cells = _grid(seed)
        rng = random.Random(1000 + seed)
        r1, c1 = rng.randint(-8, 30), rng.randint(-8, 10)
        r2, c2 = r1 + rng.randint(0, 30), c1 + rng.randint(0, 10)
        inside = {(r, c) for r, c in cells if max(r1, 1) <= r <= r2 and max(c1, 1) <= c <= c2}
        got = dict(cells_in(cells, r1, c1, r2, c2))
        assert set(got) == inside
        assert all(got[key] is cells[key] for key in got)


def test_a_small_box_is_probed_and_a_large_one_walked() -> None:
    cells = {(r, 2): Cell("Oven", r, 2, float(r)) for r in range(1, 101)}  # 100 cells
    probed = list(cells_in(cells, 10, 1, 12, 3))  # 9 places < 100 cells: probed row by row
    assert [key for key, _ in probed] == [(10, 2), (11, 2), (12, 2)]
    walked = list(cells_in(cells, 1, 1, 100, 3))  # 300 places ≥ 100 cells: the sheet's order
    assert [key for key, _ in walked] == [(r, 2) for r in range(1, 101)]


def _plain_window(reader: DesignInputReader, anchors: list[Cell]) -> list[tuple[int, Cell]]:
    """The window as it was read before the text index: every place of the box probed, the
    cells ordered by distance to the nearest anchor, row and column; only text cells kept
    (the two readers of the window look at nothing else)."""
    sheet = reader.workbook.sheet(anchors[0].sheet)
    if sheet is None:
        return []
    same = [a for a in anchors if a.sheet.lower() == sheet.name.lower()]
    r1, r2 = min(a.row for a in same) - WINDOW_ROWS[0], max(a.row for a in same) + WINDOW_ROWS[1]
    c1, c2 = min(a.col for a in same) - WINDOW_COLS[0], max(a.col for a in same) + WINDOW_COLS[1]
    inside = list(cells_in(sheet.cells, r1, c1, r2, c2))
    near = [
        (min(abs(r - a.row) + abs(c - a.col) for a in same), r, c, cell) for (r, c), cell in inside
    ]
    return [
        (d, cell)
        for d, _, _, cell in sorted(near, key=lambda t: t[:3])
        if isinstance(cell.value, str)
    ]


def _generated_book(seed: int, path: Path) -> None:
    """A sheet of numbers with words scattered near and far, and a LINEST block among them."""
    rng = random.Random(seed)
    book = xlsxwriter.Workbook(str(path))
    for name in ("Bench", "Notes"):
        sheet = book.add_worksheet(name)
        sheet.write_row(0, 0, ["Load (kg)", "Stretch (mm)"])
        for row in range(1, 31):
            sheet.write_row(row, 0, [row * 0.5, row * 0.5 * 1.9 + rng.uniform(-0.2, 0.2)])
        for _ in range(rng.randint(5, 60)):
            r, c = rng.randint(0, 45), rng.randint(2, 20)
            sheet.write(r, c, rng.choice(["note", "Slope that matters", "Working range", 3.5, ""]))
        top = rng.randint(2, 20)
        sheet.write_formula(top, 4, "=SLOPE(B2:B31,A2:A31)")
        sheet.write_formula(top + 1, 4, "=INTERCEPT(B2:B31,A2:A31)")
        sheet.write(top, 3, "Slope")
    book.close()


def test_the_text_index_gives_the_window_the_probes_gave(tmp_path: Path) -> None:
    books = [tmp_path / f"words_{seed}.xlsx" for seed in range(12)]
    for seed, path in enumerate(books):
        _generated_book(seed, path)
    fixtures = sorted(
        (Path(__file__).resolve().parents[2] / "fixtures" / "workbooks").glob("*.xlsx")
    )
    compared = 0
    for path in books + fixtures:
        workbook = read_workbook(path)
        locator = Locator(workbook)
        reader = DesignInputReader(workbook, Evaluator(workbook), locator.parsed)
        for spec in locate(workbook, None, locator):
            anchors = [s.cell for s in spec.stats.values()] + [u.cell for u in spec.uses]
            if not anchors:
                continue
            assert list(reader._window(anchors)) == _plain_window(reader, anchors), spec.id
            compared += 1
    assert compared > 100
