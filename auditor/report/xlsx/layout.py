"""Layout helpers of audit.xlsx: fitted column widths, row heights, tables, print setup.

XlsxWriter cannot measure text, so ``SheetWriter`` remembers the longest value written into each
column and sets widths from that at the end ("widths that fit" without a spreadsheet engine), and
estimates the height of rows holding wrapped text from the final widths.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from xlsxwriter.worksheet import Worksheet

from auditor.report.common import finite_or_none, is_number
from auditor.report.xlsx.links import hyperlink_formula, source_link
from auditor.report.xlsx.style import Styles, number_format, put, shown_number

NUMBER_DISPLAY = 11  # "General" shows about this many characters of a long number
FILTER_BUTTON = 3  # characters a table header needs for its filter arrow
DEFAULT_WIDTH = 8.43  # Excel's default column width, in characters
LINE_HEIGHT = 15  # points per line of 11-point text
TEXT_PER_DIGIT = 1.15  # characters of running text per unit of column width (measured in LO)


def display_length(value: Any) -> int:
    value = finite_or_none(value)
    if value is None:
        return 0
    if is_number(value) and not isinstance(value, bool):
        return min(len(f"{value:.10g}"), NUMBER_DISPLAY)
    return max((len(line) for line in str(value).splitlines()), default=0)


class SheetWriter:
    """Writes cells and remembers how wide each column and how tall each row needs to be.

    Neither Excel's nor LibreOffice's row heights can be trusted to follow wrapped text in a
    file written by a script (LibreOffice keeps the default height), so rows holding wrapped
    text get an explicit height estimated from the final column widths.
    """

    def __init__(self, sheet: Worksheet, styles: Styles) -> None:
        self.sheet = sheet
        self.styles = styles
        self.widths: dict[int, int] = {}
        self.wrapped: list[tuple[int, int, int, str]] = []  # row, first col, last col, text
        self.wrapped_columns: set[int] = set()  # columns with wrapped text (headers aside)

    def fit(self, col: int, length: int) -> None:
        self.widths[col] = max(self.widths.get(col, 0), length)

    def put(
        self,
        row: int,
        col: int,
        value: Any,
        cell_format: Any = None,
        fit: bool = True,
        wrap: bool = False,
    ) -> None:
        put(self.sheet, row, col, value, cell_format)
        if wrap and value:
            self.wrapped.append((row, col, col, str(value)))
            self.wrapped_columns.add(col)
        elif fit:
            self.fit(col, display_length(value))

    def num(self, row: int, col: int, value: Any, kind: str = "plain") -> None:
        """A computed number, shown to six significant digits (the cell keeps every digit)."""
        value = finite_or_none(value)
        if not is_number(value) or isinstance(value, bool):
            self.put(row, col, value, self.styles.top)
            return
        number = float(value)
        fmt = number_format(number)
        self.sheet.write_number(row, col, value, self.styles.numeric(number, kind, fmt))
        self.fit(col, len(shown_number(number, fmt=fmt)))

    def merge(self, row: int, first: int, last: int, text: str, cell_format: Any) -> None:
        # merge_range writes with the generic write(), which would make "=…" text a formula.
        self.sheet.merge_range(row, first, row, last, "", cell_format)
        put(self.sheet, row, first, text, cell_format)
        self.wrapped.append((row, first, last, text))

    def header(
        self, row: int, col: int, text: str, filtered: bool = False, numeric: bool = False
    ) -> None:
        """A header cell; it wraps, so only its longest word must fit.

        ``numeric`` aligns it right, over the right-aligned numbers of its column.
        """
        put(self.sheet, row, col, text, self.styles.header_right if numeric else self.styles.header)
        longest = max((len(word) for word in text.split()), default=0)
        self.fit(col, longest + (FILTER_BUTTON if filtered else 0))
        self.wrapped.append((row, col, col, text + " " * (FILTER_BUTTON if filtered else 0)))

    def link(self, row: int, col: int, url: str, text: str, fit: bool = True) -> None:
        self.sheet.write_url(row, col, url, self.styles.link, string=text)
        if fit:
            self.fit(col, len(text))

    def source(
        self, row: int, col: int, path: str, cell: str, text: str = "", fit: bool = True
    ) -> None:
        """A link into a source workbook, or plain text when no link can be made."""
        text = text or cell
        target = source_link(path, cell)
        if target is None:
            self.put(row, col, text, self.styles.top, fit=fit)
            return
        self.sheet.write_formula(row, col, hyperlink_formula(target, text), self.styles.link, text)
        if fit:
            self.fit(col, len(text))

    def apply_widths(
        self, minimum: int = 6, maximum: int = 50, fixed: Mapping[int, float] | None = None
    ) -> dict[int, float]:
        """Set every column's width and the height of rows with wrapped text; return the widths."""
        fixed = fixed or {}
        widths: dict[int, float] = {}
        for col in sorted(set(self.widths) | set(fixed)):
            if col in fixed:
                widths[col] = fixed[col]
            else:
                widths[col] = min(max(self.widths[col] + 2, minimum), maximum)
            self.sheet.set_column(col, col, widths[col])
        lines: dict[int, int] = {}
        for row, first, last, text in self.wrapped:
            width = sum(widths.get(col, DEFAULT_WIDTH) for col in range(first, last + 1))
            lines[row] = max(lines.get(row, 1), text_lines(text, width))
        for row in sorted(lines):
            if lines[row] > 1:
                self.sheet.set_row(row, LINE_HEIGHT * lines[row])
        return widths


def add_table(
    sheet: Worksheet,
    name: str,
    headers: list[str],
    rows: int,
    styles: Styles,
    numeric: frozenset[str] = frozenset(),
) -> None:
    """An Excel table over the header and ``rows`` data rows, with filters and a frozen header.

    The headers of ``numeric`` columns are aligned right, over their numbers.
    """
    last_row = max(rows, 1)  # a table needs one data row; an empty result gets a blank one
    columns = [
        {
            "header": header,
            "header_format": styles.header_right if header in numeric else styles.header,
        }
        for header in headers
    ]
    sheet.add_table(
        0,
        0,
        last_row,
        len(headers) - 1,
        {"name": name, "columns": columns, "style": "Table Style Light 1", "autofilter": True},
    )
    sheet.freeze_panes(1, 0)


def text_lines(text: str, width: float) -> int:
    """How many lines ``text`` wraps to in a column ``width`` characters wide (an estimate)."""
    # A column's width counts digit widths; ordinary text runs about 15% narrower.
    usable = max(int(width * TEXT_PER_DIGIT) - 1, 1)
    total = 0
    for paragraph in text.splitlines() or [""]:
        # Word wrap: a word that does not fit on the line starts the next one.
        count, filled = 1, 0
        for word in paragraph.split():
            needed = len(word) if filled == 0 else filled + 1 + len(word)
            if needed <= usable or filled == 0:
                filled = needed
            else:
                count, filled = count + 1, len(word)
            while filled > usable:  # a word longer than a line breaks anywhere
                count, filled = count + 1, filled - usable
        total += count
    return total


def print_setup(sheet: Worksheet, title: str) -> None:
    """Landscape, one page wide, the sheet's name and page numbers: ready to print and sign."""
    sheet.set_landscape()
    sheet.set_paper(9)  # A4
    sheet.fit_to_pages(1, 0)
    sheet.set_margins(left=0.5, right=0.5, top=0.7, bottom=0.7)
    sheet.set_header(f"&L&8regaudit audit&R&8{title.replace('&', '&&')}")
    sheet.set_footer("&R&8page &P of &N")
