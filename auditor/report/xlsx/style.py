"""The look of audit.xlsx: the palettes, the cell formats and a typed cell writer.

Colour never carries meaning alone: every coloured severity or verdict cell also holds its word,
so the workbook reads the same in grey print and to a reader who does not see the colours.
"""

from __future__ import annotations

import math
from typing import Any

from xlsxwriter import Workbook
from xlsxwriter.format import Format
from xlsxwriter.worksheet import Worksheet

from auditor.model import SEVERITIES, Severity
from auditor.report.common import finite_or_none, is_number

# (text colour, fill colour) per severity: dark text on a pale fill keeps contrast high.
PALETTE: dict[Severity, tuple[str, str]] = {
    "critical": ("#7A0F16", "#F8D7DA"),  # "ember": deep red on pale rose
    "major": ("#7A3E00", "#FBE3C8"),  # "clay": burnt umber on pale apricot
    "minor": ("#5C5400", "#F4EFC2"),  # "reed": dark olive on pale straw
    "info": ("#24456B", "#DDE8F3"),  # "slate": slate blue on pale sky
}
# The verdict on a reported value; hues kept apart from the severity fills above.
VERDICT_PALETTE: dict[str, tuple[str, str]] = {
    "confirmed": ("#1E5631", "#DCEFD9"),  # "pine": dark green on pale mint
    "mismatch": ("#6B1D5C", "#F0DCEB"),  # "plum": dark plum on pale orchid
    "unverifiable": ("#444444", "#ECECEC"),  # "ash": graphite on pale grey
}
HEADER_FILL = "#E7E9EE"  # a quiet grey-blue, distinct from every severity fill
LIVE_FILL = "#EEF6F2"  # cells that hold a live formula, so a reviewer knows which to inspect
MISMATCH_FILL = VERDICT_PALETTE["mismatch"][1]

EXCEL_TEXT_LIMIT = 32767  # characters per cell; longer text is cut (audit.json keeps all of it)
SIGNIFICANT = 6  # digits shown of a computed number, as summary.txt shows them; the cell keeps all
PLAIN_RANGE = (-4, 9)  # decimal exponents shown without scientific notation


def number_format(value: float, digits: int = SIGNIFICANT) -> str:
    """A number format that shows ``value`` to ``digits`` significant digits.

    Excel has no "significant digits" format, and "General" fills whatever width the column has
    (so neighbouring numbers run together); a format chosen per value keeps columns readable
    while the cell still holds the full double.
    """
    if not math.isfinite(value) or value == 0:
        return "General"
    if value.is_integer() and abs(value) < 10 ** PLAIN_RANGE[1]:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    if PLAIN_RANGE[0] <= exponent < PLAIN_RANGE[1]:
        decimals = max(0, digits - 1 - exponent)
        return "0." + "0" * decimals if decimals else "0"
    return "0." + "0" * (digits - 1) + "E+00"


def shown_number(value: float, digits: int = SIGNIFICANT, fmt: str | None = None) -> str:
    """The text ``number_format`` makes of ``value``: used to fit column widths (``fmt``: that
    format, when the caller has it already)."""
    fmt = number_format(value, digits) if fmt is None else fmt
    if fmt == "General":
        return f"{value:.10g}"
    if "E" in fmt:
        return f"{value:.{digits - 1}E}"
    decimals = len(fmt.split(".", 1)[1]) if "." in fmt else 0
    return f"{value:.{decimals}f}"


def _coloured(book: Workbook, text: str, fill: str) -> Format:
    # The indent keeps the word clear of a right-aligned number in the cell to its left; a
    # longer verdict ("mismatch (also R² and 2 more)") wraps within its column.
    properties = {"bold": True, "valign": "top", "font_color": text, "bg_color": fill}
    properties["text_wrap"] = True
    return book.add_format(properties | {"indent": 1})


class Styles:
    """The formats of one workbook (XlsxWriter formats belong to the workbook that made them)."""

    def __init__(self, book: Workbook) -> None:
        self.book = book
        self._numbers: dict[tuple[str, str], Format] = {}
        self.title: Format = book.add_format({"bold": True, "font_size": 14})
        self.section: Format = book.add_format({"bold": True, "font_size": 12, "bottom": 1})
        self.label: Format = book.add_format({"bold": True, "valign": "top"})
        self.header: Format = book.add_format(
            {"bold": True, "bg_color": HEADER_FILL, "bottom": 1, "text_wrap": True, "valign": "top"}
        )
        self.header_right: Format = book.add_format(
            {
                "bold": True,
                "bg_color": HEADER_FILL,
                "bottom": 1,
                "text_wrap": True,
                "valign": "top",
                "align": "right",
                "indent": 1,  # keeps it clear of a left-aligned header to its right
            }
        )
        self.top: Format = book.add_format({"valign": "top"})
        self.wrapped: Format = book.add_format({"valign": "top", "text_wrap": True})
        self.number: Format = book.add_format({"valign": "top", "num_format": "General"})
        self.count: Format = book.add_format({"valign": "top", "align": "left"})
        self.link: Format = book.add_format(
            {"valign": "top", "font_color": "#1F4E9A", "underline": 1}
        )
        self.live: Format = book.add_format({"valign": "top", "bg_color": LIVE_FILL, "indent": 1})
        self.formula_text: Format = book.add_format(
            {"valign": "top", "font_name": "Courier New", "font_size": 9, "font_color": "#333333"}
        )
        self.muted: Format = book.add_format({"valign": "top", "font_color": "#666666"})
        self.muted_indented: Format = book.add_format(
            {"valign": "top", "font_color": "#666666", "indent": 1}
        )
        # A reported value that disagrees: bold on the mismatch fill; the verdict column says so.
        self.mismatch: Format = book.add_format(
            {"valign": "top", "bold": True, "bg_color": MISMATCH_FILL}
        )
        self.caution: Format = book.add_format(
            {"text_wrap": True, "valign": "top", "italic": True, "border": 1}
        )
        self.severity: dict[str, Format] = {
            name: _coloured(book, *PALETTE[name]) for name in SEVERITIES
        }
        self.verdict: dict[str, Format] = {
            name: _coloured(book, *colours) for name, colours in VERDICT_PALETTE.items()
        }

    # The properties of the cell kinds that hold computed numbers.
    NUMBER_KINDS: dict[str, dict[str, Any]] = {
        "plain": {"valign": "top"},
        "mismatch": {"valign": "top", "bold": True, "bg_color": MISMATCH_FILL},
        "live": {"valign": "top", "bg_color": LIVE_FILL},
    }

    def numeric(self, value: float, kind: str = "plain", shown: str | None = None) -> Format:
        """The format of a computed number of one cell kind, six significant digits shown
        (``shown``: its number format, when the caller has it already)."""
        key = (number_format(value) if shown is None else shown, kind)
        if key not in self._numbers:
            properties = dict(self.NUMBER_KINDS[kind], num_format=key[0])
            self._numbers[key] = self.book.add_format(properties)
        return self._numbers[key]

    def for_verdict(self, verdict: str | None) -> Format:
        return self.verdict.get(verdict or "", self.muted)

    def for_severity(self, severity: str | None) -> Format:
        return self.severity.get(severity or "", self.top)


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
