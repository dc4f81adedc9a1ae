"""Where the words around a regression sit: the labels of its statistics (those that start a
grid's row or column too), its block's and its chart's titles (:func:`block_texts`), and the
titles around its data and at the top of its sheets, and the sheets' names
(:func:`sheet_texts`). Each text comes as (text, where, kind): ``rate`` for a slope's label,
``unit`` for a label in y's unit, ``title`` for every text (a title may head a column of
statistics); :mod:`auditor.locate.meaning` reads them into statements."""

from __future__ import annotations

from auditor.formula.syntax import Ref
from auditor.locate.roles import role_from_label
from auditor.locate.spec import RegressionSpec
from auditor.locate.words import MAX_WORDS
from auditor.read.workbook import Cell, Workbook

HEADER_ROWS_ABOVE = 3  # a title may sit a row or two above a table's header
TITLE_ROWS, TITLE_COLS = 3, 12  # where a sheet's title sits
RATE_ROLES = ("slope", "se_slope", "ci_slope_low", "ci_slope_high")  # labels in y per x
UNIT_ROLES = ("intercept", "se_intercept", "residual_sd")  # labels in y's unit

Text = tuple[str, str, str]


def clean(value: object) -> str | None:
    """A text that can be a label or a title (not a note, not empty)."""
    if isinstance(value, str) and value.strip() and len(value) <= MAX_WORDS:
        return value.strip()
    return None


def block_texts(workbook: Workbook, spec: RegressionSpec) -> list[Text]:
    """(text, where, kind): the labels of the statistics (those of the slope and its SE read
    as rates, those in y's unit as units, every one as a title too: a title may head a column
    of statistics), the block's title and the titles of charts whose trendline fits it."""
    out: list[Text] = []
    for stat in spec.stats.values():
        base = stat.key.split("@")[0].split("[")[0]
        grid = _grid_labels(workbook, stat.cell, base)
        for words, where in [(w, _label_cell(workbook, stat.cell, w))
                             for w in (stat.label, stat.column_header) if w] + grid:  # fmt: skip
            if words:
                if base in RATE_ROLES:
                    out.append((words, where, "rate"))
                if base in UNIT_ROLES:
                    out.append((words, where, "unit"))
                out.append((words, where, "title"))
    if spec.label:
        out.append((spec.label, _title_cell(workbook, spec), "title"))
    for use in spec.trendlines:
        title = getattr(getattr(use, "chart", None), "title", "")
        if title:
            out.append((title, f"chart {title!r}", "title"))
    return out


def _grid_labels(workbook: Workbook, cell: Cell, role: str) -> list[tuple[str, str]]:
    """In a grid of statistics (one regression per column, or per row), the label that starts
    the cell's row (column) and names its statistic: the first text met going left (up) over
    filled cells only (a gap ends the grid, so a block beside another borrows nothing), kept
    only when it labels the statistic ``role`` ('Slope (NTU per L/s)' for a slope): a column
    header over computed values is no label of a statistic."""
    sheet = workbook.sheet(cell.sheet)
    out = []
    for step_row, step_col in ((0, -1), (-1, 0)):
        row, col = cell.row + step_row, cell.col + step_col
        while sheet is not None and row >= 1 and col >= 1:
            other = sheet.get(row, col)
            if other is None or other.value is None:
                break
            text = clean(other.value) if not other.formula else None
            if text is not None:
                if role_from_label(text) == role:
                    out.append((text, other.address))
                break
            row, col = row + step_row, col + step_col
    return out


def sheet_texts(
    workbook: Workbook, spec: RegressionSpec, headers: list[tuple[str, Ref]]
) -> list[Text]:
    """Titles around the data and the statistics: above the data headers (each given by its
    cell and the range it heads), the top rows of the sheets, and the sheets' names."""
    out: list[Text] = []
    for header_cell, ref in headers:
        out.extend(_above(workbook, header_cell, ref))
    for name in dict.fromkeys([spec.sheet, spec.x.sheet, spec.y.sheet]):
        sheet = workbook.sheet(name)
        if sheet is None:
            continue
        out.append((sheet.name, f"sheet {sheet.name!r}", "title"))
        for row in range(1, TITLE_ROWS + 1):
            for col in range(1, TITLE_COLS + 1):
                cell = sheet.get(row, col)
                text = clean(cell.value) if cell is not None and not cell.formula else None
                if text and cell is not None:
                    out.append((text, cell.address, "title"))
    return out


def _title_cell(workbook: Workbook, spec: RegressionSpec) -> str:
    """Where the block's title sits: a few rows above its top statistic."""
    cells = [s.cell for s in spec.stats.values()]
    if not cells:
        return spec.sheet
    top = min(cells, key=lambda c: (c.row, c.col))
    sheet = workbook.sheet(top.sheet)
    for row in range(top.row - 1, max(0, top.row - 4), -1):
        for col in range(max(1, top.col - 2), top.col + 1):
            cell = sheet.get(row, col) if sheet is not None else None
            if cell is not None and cell.value == spec.label:
                return cell.address
    return top.sheet


def _label_cell(workbook: Workbook, cell: Cell, text: str) -> str:
    """Where a statistic's label sits: left of the cell (three cells), above, or else the
    cell itself (a label read from elsewhere, such as a block's column header)."""
    sheet = workbook.sheet(cell.sheet)
    spots = [(cell.row, cell.col - dc) for dc in (1, 2, 3)] + [(cell.row - 1, cell.col)]
    for row, col in spots:
        other = sheet.get(row, col) if sheet is not None and min(row, col) >= 1 else None
        if other is not None and other.value == text:
            return other.address
    return cell.address


def _above(workbook: Workbook, header_cell: str, ref: Ref) -> list[Text]:
    """Texts within a few rows above a data header, over the table's width: its title."""
    sheet = workbook.sheet(ref.sheet)
    if sheet is None:
        return []
    _, _, spot = header_cell.rpartition("!")
    row = int("".join(ch for ch in spot if ch.isdigit()))
    out = []
    for r in range(row - 1, max(0, row - 1 - HEADER_ROWS_ABOVE), -1):
        for c in range(max(1, ref.c1 - 2), ref.c2 + 3):
            cell = sheet.get(r, c)
            text = clean(cell.value) if cell is not None and not cell.formula else None
            if text and cell is not None:
                out.append((text, cell.address, "title"))
    return out
