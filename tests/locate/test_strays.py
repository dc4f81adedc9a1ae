"""Calls that name another block's data: adopted by the block they sit in (a block copied with
an absolute reference left pointing back), never by a neighbour in a grid of regressions."""

from __future__ import annotations

from auditor.formula.syntax import Ref
from auditor.grid import parse_cell
from auditor.locate.grouping import PairGroups, adopt_strays
from auditor.locate.spec import PairUse
from auditor.read.workbook import Cell


def _column(col: int, first: int = 2, last: int = 12) -> Ref:
    return Ref("Log", first, col, last, col)


def _use(coord: str, x_col: int, function: str = "SLOPE") -> PairUse:
    """A call at ``coord`` over x in column ``x_col`` and y in the column after it."""
    row, col = parse_cell(coord)
    return PairUse(Cell("Results", row, col, 0.0), function, _column(x_col + 1), _column(x_col))


def _grouped(uses: list[PairUse]) -> dict[str, set[str]]:
    """Each call's cell -> the cells of the group it ends in."""
    out = {}
    for group in adopt_strays(PairGroups(uses).groups()):
        cells = {u.cell.coord for u in group}
        for cell in cells:
            out[cell] = cells
    return out


def test_a_grid_column_keeps_its_r_squared_below_its_own_column() -> None:
    # one regression per column: B over data A:B… and C over data D:E; R² in row 9
    uses = [_use(c, 1) for c in ("B3", "B4", "B5", "B9")] + [
        _use(c, 4) for c in ("C3", "C4", "C5", "C9")
    ]
    grouped = _grouped(uses)
    assert grouped["B9"] == {"B3", "B4", "B5", "B9"}
    assert grouped["C9"] == {"C3", "C4", "C5", "C9"}


def test_a_grid_row_keeps_its_r_squared_beside_a_lone_call() -> None:
    # one regression per row; row 3's R² stands alone (the rest built by hand), row 4's R² at
    # the far end of its row is row 4's
    uses = [_use("H3", 1, "RSQ")] + [_use(c, 4) for c in ("B4", "C4", "D4")]
    uses.append(_use("H4", 4, "RSQ"))
    grouped = _grouped(uses)
    assert grouped["H4"] == {"B4", "C4", "D4", "H4"}
    assert grouped["H3"] == {"H3"}


def test_a_block_copied_across_adopts_the_call_left_pointing_back() -> None:
    # block E over data A:B, block H over data D:E; H17 still names A:B
    uses = [_use(c, 1) for c in ("E15", "E16", "E17", "E18")]
    uses += [_use(c, 4) for c in ("H15", "H16", "H18")] + [_use("H17", 1, "STEYX")]
    grouped = _grouped(uses)
    assert grouped["H17"] == {"H15", "H16", "H17", "H18"}
    assert grouped["E17"] == {"E15", "E16", "E17", "E18"}


def test_a_block_copied_down_adopts_the_call_left_pointing_back() -> None:
    uses = [_use(c, 1) for c in ("E15", "E16", "E17", "E18")]
    uses += [_use(c, 4) for c in ("E30", "E31", "E33")] + [_use("E32", 1, "STEYX")]
    grouped = _grouped(uses)
    assert grouped["E32"] == {"E30", "E31", "E32", "E33"}
