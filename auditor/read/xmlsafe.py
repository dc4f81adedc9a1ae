"""XML parts of a package, parsed so that hostile markup cannot hurt the reader.

Three layers, each enough on its own against entity expansion (billion laughs, quadratic
blow-up) and external entities:

1. a part whose prolog holds a document type declaration is refused before parsing: a
   spreadsheet part never needs one, and every entity attack starts with one;
2. the lxml parser runs with entity substitution off, no network, no DTD loading and lxml's
   default size limits (``huge_tree`` off), so even an undetected declaration expands nothing;
3. after parsing, a tree that still carries a DTD is refused.

The zip layer has bounded every part's size already (:func:`auditor.read.workbook.check_container`
reads the central directory, and :mod:`zipfile` stops at a member's declared size).
"""

from __future__ import annotations

import re
import zipfile
from collections.abc import Iterator
from typing import IO, Any

from lxml import etree

from auditor.errors import UnreadableWorkbook

PROLOG_LIMIT = 64 * 1024  # bytes; real parts open with well under 200 bytes before the root
PARSER_OPTIONS: dict[str, Any] = {
    "resolve_entities": False,
    "no_network": True,
    "load_dtd": False,
    "dtd_validation": False,
    "huge_tree": False,
}
_SAFE_PARSER = etree.XMLParser(remove_comments=True, remove_pis=True, **PARSER_OPTIONS)
# Markup allowed before the root element: an XML declaration, processing instructions,
# comments and white space.
_PROLOG_ITEM = re.compile(r"\s+|<\?.*?\?>|<!--.*?-->", re.S)


class _Rewound:
    """A stream whose first bytes were read already: hands them out again, then the rest."""

    def __init__(self, head: bytes, rest: IO[bytes]) -> None:
        self._head = head
        self._rest = rest

    def read(self, size: int = -1) -> bytes:
        if self._head:
            if size is None or size < 0:
                data, self._head = self._head + self._rest.read(), b""
                return data
            data, self._head = self._head[:size], self._head[size:]
            return data
        return self._rest.read(size)


def _decoded(head: bytes) -> str:
    """Enough of the head as text to find the root element, whatever the encoding."""
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        return head.decode("utf-16", errors="replace")
    if head[:2] in (b"<\x00", b"\x00<"):
        return head.decode("utf-16-le" if head[0] == 0x3C else "utf-16-be", errors="replace")
    if head.startswith(b"\xef\xbb\xbf"):
        head = head[3:]
    return head.decode("latin-1")


def refuse_declarations(head: bytes, where: str) -> None:
    """Raise unless ``head`` reaches the root element through a plain prolog (no DOCTYPE)."""
    text = _decoded(head)
    position = 0
    while True:
        match = _PROLOG_ITEM.match(text, position)
        if match is None:
            break
        position = match.end()
    rest = text[position:]
    unclosed = rest.startswith(("<!--", "<?"))  # a comment or instruction open at the head's end
    if len(head) >= PROLOG_LIMIT and (unclosed or rest == ""):
        raise UnreadableWorkbook(
            f"{where} opens with more than {PROLOG_LIMIT // 1024} KB before its first element; "
            "refused as unsafe"
        )
    if unclosed:
        raise UnreadableWorkbook(
            f"{where} is not well-formed XML (its opening {rest[:5]!r}... is never closed)"
        )
    if rest[:2] == "<!":
        raise UnreadableWorkbook(
            f"{where} declares a document type ({rest[:9]!r}...); spreadsheet parts never do, "
            "and such declarations are how entity-expansion attacks start: refused as unsafe"
        )


def open_part(archive: zipfile.ZipFile, name: str, where: str) -> tuple[IO[bytes], _Rewound]:
    """The part's stream (to close) and a reader over it whose prolog has been checked."""
    try:
        stream = archive.open(name)
    except KeyError as exc:
        raise UnreadableWorkbook(f"{where} is missing from the package") from exc
    try:
        head = stream.read(PROLOG_LIMIT)
        refuse_declarations(head, where)
    except BaseException:
        stream.close()
        raise
    return stream, _Rewound(head, stream)


def refuse_dtd(tree: Any, where: str) -> None:
    docinfo = tree.getroottree().docinfo
    if docinfo.internalDTD is not None or docinfo.externalDTD is not None or docinfo.doctype:
        raise UnreadableWorkbook(f"{where} carries a document type declaration; refused as unsafe")


def parse_part(archive: zipfile.ZipFile, name: str, where: str) -> Any:
    """The whole part as an element tree (for the small parts: workbook, relationships,
    styles); ``where`` names the part in messages ("book.xlsx: part 'xl/styles.xml'")."""
    stream, reader = open_part(archive, name, where)
    try:
        root = etree.parse(reader, _SAFE_PARSER).getroot()
    except etree.XMLSyntaxError as exc:
        raise UnreadableWorkbook(f"{where} is not well-formed XML ({exc.msg})") from exc
    finally:
        stream.close()
    refuse_dtd(root, where)
    return root


def iter_part(
    archive: zipfile.ZipFile, name: str, where: str, tags: tuple[str, ...]
) -> Iterator[Any]:
    """The part's elements named ``tags`` (qualified names), each when its end tag is read.

    The caller clears what it has used; :func:`prune` drops the cleared elements so that memory
    stays flat on a million rows."""
    stream, reader = open_part(archive, name, where)
    events = etree.iterparse(reader, events=("end",), tag=tags, **PARSER_OPTIONS)
    try:
        for _event, element in events:
            yield element
    except etree.XMLSyntaxError as exc:
        raise UnreadableWorkbook(f"{where} is not well-formed XML ({exc.msg})") from exc
    finally:
        stream.close()
    root = events.root
    if root is not None:
        refuse_dtd(root, where)


def prune(element: Any) -> None:
    """Drop ``element`` and its earlier siblings from the tree being built."""
    parent = element.getparent()
    if parent is not None:
        del parent[: parent.index(element) + 1]
