"""The fast path of the one-pass reader: regular expressions over the inflated sheet XML.

lxml's iterparse builds an element for every ``<row>``, ``<c>`` and ``<v>`` before the reader
looks at them; most of the reading time went there. This scanner reads the same text with
Python's ``re`` instead, in two passes per block of rows, both in C: a structural pattern that
accepts only complete rows made of the shapes spreadsheet writers emit (``<c r="B7" s="2"
t="s"><v>3</v></c>``, with an optional ``<f>`` and inline ``<is><t>``), then ``findall`` to take
their fields. A row the structural pattern does not accept is read by a small tokenizer
(:func:`auditor.read.scan_markup.parse_element`); everything outside ``<sheetData>`` goes
through lxml's feed parser (:class:`auditor.read.scan_markup.Frame`).

It gives the same :class:`~auditor.read.workbook.Sheet` as :class:`auditor.read.sheet.SheetReader`
(``tests/read/test_scan.py``, ``benchmarks/same_cells.py``): the typing of values and formulas is
that reader's own code. Whatever the scanner does not fully recognise - another encoding, a
comment, CDATA, a processing instruction, a namespace declared inside the data, an element of
another namespace, an undefined entity, a damaged value - makes :func:`read_sheet` read the
part again with the lxml reader, from the start, so that its result and its error messages hold.
The XML guard (:mod:`auditor.read.xmlsafe`) checks the prolog before either reads anything.
"""

from __future__ import annotations

import codecs
import re
from collections import Counter
from dataclasses import dataclass

from auditor.errors import UnreadableWorkbook
from auditor.read import compact
from auditor.read.book import BookState
from auditor.read.scan_markup import Frame, Unrecognised, attributes, parse_element
from auditor.read.scan_typing import CellMaker
from auditor.read.sheet import MAX_CELLS, SheetReader
from auditor.read.workbook import Sheet
from auditor.read.xmlsafe import open_part

CHUNK = 1 << 20  # bytes inflated per step
MAX_PENDING = 8 << 20  # an unfinished row longer than this goes to lxml (its text limit: 10 MB)
MAX_HEAD = 16 << 20  # bytes before <sheetData>
# Why parts went to the lxml reader in this process (diagnostics for benchmarks/same_cells.py).
FALLBACKS: Counter[str] = Counter()

_SHEET_DATA = re.compile(rb"<(?:([A-Za-z_][A-Za-z0-9_.\-]*):)?sheetData([^<>]*)>")
# Control characters XML 1.0 forbids: deleting every other byte leaves nothing on a plain part.
_PLAIN_BYTES = bytes(range(0x20, 0x100)) + b"\t\n\r"
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")
# Characters XML forbids, and markup the scanner never reads itself: a CDATA end, namespace
# declarations. Comments, CDATA sections and processing instructions ("<!", "<?") need no
# search of their own: no pattern accepts them and the tokenizer refuses them (its tag
# pattern wants a name after "<"), so any of them hands the part to lxml.
_NAMESPACE_DECLARATION = re.compile("xmlns")  # re's literal search: faster than str.find here


def _odd(buffer: str, start: int, stop: int, ascii: bool) -> bool:
    """Whether ``buffer[start:stop]`` holds a CDATA end, a namespace declaration or (unless
    the block was ASCII) U+FFFE or U+FFFF. A one-character search (C's memchr) rules out
    most "]]>" at once: "]" is rare in sheet XML."""
    bracket = buffer.find("]", start, stop)
    if bracket >= 0 and buffer.find("]]>", bracket, stop) >= 0:
        return True
    if _NAMESPACE_DECLARATION.search(buffer, start, stop) is not None:
        return True
    return not ascii and (
        buffer.find("\ufffe", start, stop) >= 0 or buffer.find("\uffff", start, stop) >= 0
    )


_ATTRIBUTE = r' [A-Za-z][A-Za-z0-9]{0,31}(?::[A-Za-z][A-Za-z0-9]{0,31})?="[^"<&\t\n]*"'
_ATTRIBUTES = rf"((?:{_ATTRIBUTE})*+)"


@dataclass(frozen=True)
class Patterns:
    """The scanner's patterns for elements written with one prefix ("" or "x:")."""

    plain_rows: re.Pattern[str]  # where a run of rows of plain cells ends
    plain_cells: re.Pattern[str]  # the fields of a plain cell: letters, digits, s, t, v
    row_attributes: re.Pattern[str]  # a row's attributes after its number, where it has any
    rows: re.Pattern[str]  # where a run of ordinary rows that are not all plain ends
    fields: re.Pattern[str]  # the fields of an ordinary row or cell (see scan_typing.Fields)


def _patterns(prefix: str) -> Patterns:
    """The patterns for elements written with ``prefix`` ("" or "x:")."""
    p = re.escape(prefix)
    # r, s, t, then the cell-metadata, value-metadata and phonetic flags the reader ignores,
    # each at most once in this order (so no attribute can be given twice).
    cell = (
        rf'<{p}c r="([A-Z]{{1,3}})([0-9]{{1,7}})"(?: s="([0-9]{{1,6}})")?'
        r'(?: t="([a-zA-Z]{1,9})")?'
        r'(?: cm="[0-9]{1,9}")?(?: vm="[0-9]{1,9}")?(?: ph="(?:[01]|true|false)")?'
        rf"(?:/>|>(?:(<{p}f){_ATTRIBUTES}(?:/>|>([^<]*)</{p}f>))?"
        rf"(?:<{p}v>([^<&]*)</{p}v>|<{p}v/>)?"
        rf'(?:(<{p}is>)<{p}t(?: xml:space="preserve")?>([^<&]*)</{p}t></{p}is>)?</{p}c>)'
    )
    # A plain cell: a number or a shared string, no formula (nearly every cell of a sheet).
    plain = (
        rf'<{p}c r="([A-Z]{{1,3}})([0-9]{{1,7}})"(?: s="([0-9]{{1,6}})")?(?: t="([sn])")?>'
        rf"<{p}v>([^<&]+)</{p}v></{p}c>"
    )
    row = rf'<{p}row r="([0-9]{{1,7}})"{_ATTRIBUTES}'
    plain_row = rf"{row}(?:/>|>(?:[ \t\n]*+{plain})*+[ \t\n]*+</{p}row>)"
    any_row = rf"{row}/>|{row}>(?:[ \t\n]*+{cell})*+[ \t\n]*+</{p}row>"
    # The structural patterns only say where a run ends: without capturing groups they run
    # about a fifth faster.
    return Patterns(
        plain_rows=re.compile(_bare(rf"(?:[ \t\n]*+{plain_row})*+[ \t\n]*+")),
        plain_cells=re.compile(plain),
        # Only rows with attributes give a match: most rows of a sheet written by a library
        # have none, and the list of their empty strings cost more than the search.
        row_attributes=re.compile(rf'<{p}row r="[0-9]{{1,7}}"((?:{_ATTRIBUTE})++)'),
        rows=re.compile(_bare(rf"(?:[ \t\n]*+(?!{plain_row})(?:{any_row}))*+[ \t\n]*+")),
        fields=re.compile(rf"{row}(/?)>|{cell}"),
    )


def _bare(pattern: str) -> str:
    """``pattern`` without capturing groups."""
    return re.sub(r"\((?!\?)", "(?:", pattern)


_PATTERNS: dict[str, Patterns] = {}


class SheetScanner(SheetReader):
    """Reads one worksheet part with the fast scanner; raises :class:`Unrecognised` when the
    part must go to the lxml reader."""

    def __init__(self, book: BookState, name: str) -> None:
        super().__init__(book, name)
        self.maker = CellMaker(book, self)
        self.prefix = ""
        self.prefixes: dict[str, str] = {}
        self.known_attributes: dict[str, dict[str, str]] = {}

    def read(self, part: str) -> Sheet:
        try:
            return self._read(part)
        finally:
            # The cell maker refers back to the scanner: left as a cycle, it would hold the
            # whole sheet until the cyclic collector walked every cell to find it.
            del self.maker

    def _read(self, part: str) -> Sheet:
        book = self.book
        where = f"{book.label}: sheet {self.sheet.name!r}"
        info = book.archive.NameToInfo.get(part)
        if info is not None and info.file_size >= compact.COMPACT_PART_BYTES:
            self.sheet.cells = self.maker.cells = compact.CompactCells(self.sheet.name)
        stream, source = open_part(book.archive, part, where)
        try:
            frame = Frame(book.ns)
            head = b""
            while (found := _SHEET_DATA.search(head)) is None:
                more = source.read(CHUNK)
                if not more or len(head) > MAX_HEAD:
                    raise Unrecognised("no sheetData element near the start")
                head += more
            if found.group(2).strip(b" \t\r\n") not in (b"", b"/"):
                raise Unrecognised("attributes on sheetData")
            prefix, self.prefixes, empty = frame.head(head[: found.end()])
            if prefix != (found.group(1) or b"").decode("ascii") + (":" if found.group(1) else ""):
                raise Unrecognised("sheetData is not where the text says it is")
            self.prefix = prefix
            rest = head[found.end() :]
            if not empty:
                rest = self._data(source, rest, frame)
            frame.tail(rest)
            while more := source.read(CHUNK):
                frame.tail(more)
            frame.close(where)
        finally:
            stream.close()
        self.merges = frame.merges
        self.maker.finish()
        self._keep_shared()
        if self.merges:
            self._unmerge()
        book.cell_count += len(self.sheet.cells)
        return self.sheet

    def _data(self, source: object, first: bytes, frame: Frame) -> bytes:
        """Read the rows; the bytes from ``</sheetData>`` on (for the frame)."""
        decoder = codecs.getincrementaldecoder("utf-8")()
        row_end, data_end = f"</{self.prefix}row>", f"</{self.prefix}sheetData>"
        patterns = _PATTERNS.get(self.prefix) or _PATTERNS.setdefault(
            self.prefix, _patterns(self.prefix)
        )
        buffer = ""
        raw, ended, carriage_return = first, False, False
        while True:
            try:
                text = decoder.decode(raw, final=ended)
            except UnicodeDecodeError as exc:
                raise Unrecognised(f"not UTF-8 ({exc})") from exc
            # Line ends as an XML parser sees them (XML 1.0, 2.11), a "\r\n" split between
            # two blocks included.
            if carriage_return and text[:1] == "\n":
                text = text[1:]
            carriage_return = text[-1:] == "\r"
            if "\r" in text:
                text = text.replace("\r\n", "\n").replace("\r", "\n")
            checked_from = max(0, len(buffer) - 16)
            buffer += text
            last_row = buffer.rfind(row_end)
            # The end of sheetData follows its last row: searched from there, not through the
            # whole block (an end before a later row is refused by the tokenizer: no element
            # is open for it to close).
            closing = buffer.find(data_end, max(checked_from, last_row))
            data_stop = closing if closing >= 0 else len(buffer)
            if raw.translate(None, _PLAIN_BYTES) and _CONTROL.search(
                buffer, checked_from, data_stop
            ):
                raise Unrecognised("control characters")
            if _odd(buffer, checked_from, data_stop, raw.isascii()):
                raise Unrecognised("markup or characters the scanner leaves to lxml")
            limit = closing if closing >= 0 else last_row + len(row_end) if last_row >= 0 else 0
            if limit > 0:
                self._region(buffer, limit, patterns)
            if closing >= 0:
                return buffer[closing:].encode("utf-8")
            buffer = buffer[limit:]
            if len(buffer) > MAX_PENDING:
                raise Unrecognised("a row longer than the scanner reads at once")
            if ended:
                raise Unrecognised("sheetData never ends")
            raw = source.read(CHUNK)  # type: ignore[attr-defined]
            ended = not raw

    def _region(self, buffer: str, end: int, patterns: Patterns) -> None:
        """Read the complete rows in ``buffer[:end]``: runs of plain rows typed a run at a time,
        runs of other ordinary rows cell by cell, any other row by the tokenizer."""
        position = 0
        row_start = f'<{self.prefix}row r="'
        while position < end:
            stop = patterns.plain_rows.match(buffer, position, end).end()  # type: ignore[union-attr]
            last_row = buffer.rfind(row_start, position, stop)
            if last_row >= 0:
                number_at = last_row + len(row_start)
                self.maker.plain(
                    patterns.plain_cells.findall(buffer, position, stop),
                    patterns.row_attributes.findall(buffer, position, stop),
                    buffer[number_at : buffer.index('"', number_at)],
                )
            position = stop
            stop = patterns.rows.match(buffer, position, end).end()  # type: ignore[union-attr]
            if stop > position:
                self.maker.rows(patterns.fields.findall(buffer, position, stop))
                position = stop
            elif position < end:
                node, position = parse_element(buffer, position, end, self.prefix, self.prefixes)
                if node.tag != "row":
                    raise Unrecognised(f"a {node.tag!r} element among the rows")
                self.maker.node_row(node)
        if len(self.sheet.cells) + self.book.cell_count > MAX_CELLS:
            raise Unrecognised("more cells than the reader accepts")

    def attributes_of(self, text: str) -> dict[str, str]:
        """The attributes in ``text`` (after an element's name), memoised: the same few strings
        (``spans="1:5"``, ``t="shared" si="0"``) come back on every row."""
        found = self.known_attributes.get(text)
        if found is None:
            found = attributes(text, self.prefixes)
            if len(self.known_attributes) < 4096:
                self.known_attributes[text] = found
        return found


def read_sheet(book: BookState, name: str, part: str, fast: bool = True) -> Sheet:
    """One worksheet part: by the fast scanner when ``fast`` and it recognises the whole part,
    otherwise (and then from the start) by the lxml reader."""
    if fast:
        counts = (book.cell_count, book.formula_count, book.valued_formulas)
        try:
            return SheetScanner(book, name).read(part)
        except Unrecognised as exc:
            FALLBACKS[str(exc).split(" (")[0]] += 1
        except (ValueError, IndexError, KeyError, OverflowError, TypeError) as exc:
            FALLBACKS[f"a value the lxml reader reports ({type(exc).__name__})"] += 1
        except UnreadableWorkbook:
            FALLBACKS["an error the lxml reader reports"] += 1
        book.cell_count, book.formula_count, book.valued_formulas = counts
        for key in [key for key in book.arrays if key[0] == name]:
            del book.arrays[key]
    return SheetReader(book, name).read(part)
