"""The look of audit.xlsx: the severity palette, the cell formats and a typed cell writer.

Colour never carries meaning alone: every coloured severity cell also holds the severity's word,
so the workbook reads the same in grey print and to a reader who does not see the colours.
"""

from __future__ import annotations

from typing import Any

from xlsxwriter import Workbook
from xlsxwriter.format import Format
from xlsxwriter.worksheet import Worksheet

from auditor.model import SEVERITIES, Severity
from auditor.report.common import finite_or_none, is_number

# (text colour, fill colour) per severity: dark text on a pale fill keeps contrast high.
PALETTE: dict[Severity, tuple[str, str]] = {
    "critical": ("#7A0F16", "#F8D7DA"),  # deep red on pale rose
    "major": ("#7A3E00", "#FBE3C8"),  # burnt umber on pale apricot
    "minor": ("#5C5400", "#F4EFC2"),  # dark olive on pale straw
    "info": ("#24456B", "#DDE8F3"),  # slate blue on pale sky
}
HEADER_FILL = "#E7E9EE"  # a quiet grey-blue, distinct from every severity fill
MISMATCH_FILL = "#F8D7DA"

EXCEL_TEXT_LIMIT = 32767  # characters per cell; longer text is cut (audit.json keeps all of it)


class Styles:
    """The formats of one workbook (XlsxWriter formats belong to the workbook that made them)."""

    def __init__(self, book: Workbook) -> None:
        self.title: Format = book.add_format({"bold": True, "font_size": 14})
        self.section: Format = book.add_format({"bold": True, "font_size": 12, "bottom": 1})
        self.label: Format = book.add_format({"bold": True, "valign": "top"})
        self.header: Format = book.add_format(
            {"bold": True, "bg_color": HEADER_FILL, "bottom": 1, "text_wrap": True}
        )
        self.top: Format = book.add_format({"valign": "top"})
        self.wrapped: Format = book.add_format({"valign": "top", "text_wrap": True})
        self.number: Format = book.add_format({"valign": "top", "num_format": "General"})
        # A reported value that disagrees: bold on a pale fill; the verdict column says why.
        self.mismatch: Format = book.add_format(
            {"valign": "top", "bold": True, "bg_color": MISMATCH_FILL}
        )
        self.caution: Format = book.add_format(
            {"text_wrap": True, "valign": "top", "italic": True, "border": 1}
        )
        self.severity: dict[str, Format] = {
            name: book.add_format(
                {
                    "bold": True,
                    "valign": "top",
                    "font_color": PALETTE[name][0],
                    "bg_color": PALETTE[name][1],
                }
            )
            for name in SEVERITIES
        }


def put(sheet: Worksheet, row: int, col: int, value: Any, cell_format: Any = None) -> None:
    """Write one value with an explicit type.

    Generic ``write`` would turn text beginning with "=" (a quoted formula) into a live formula
    and text that looks like a link into a hyperlink; XlsxWriter cannot store NaN or infinity,
    so those are written as empty cells. Empty text is an empty cell too, so that filtering on
    "(Blanks)" finds it.
    """
    value = finite_or_none(value)
    if value is None or value == "":
        sheet.write_blank(row, col, None, cell_format)
    elif isinstance(value, bool):
        sheet.write_boolean(row, col, value, cell_format)
    elif is_number(value):
        sheet.write_number(row, col, value, cell_format)
    else:
        text = str(value)
        if len(text) > EXCEL_TEXT_LIMIT:
            text = text[: EXCEL_TEXT_LIMIT - 40] + " … (cut here; audit.json has it all)"
        sheet.write_string(row, col, text, cell_format)
