"""The markup the fast sheet scanner (:mod:`auditor.read.scan`) reads outside its hot pattern.

Three pieces, each conservative: whatever it does not fully recognise raises
:class:`Unrecognised`, and the part is read by the lxml reader instead.

* :class:`Frame`: the part around ``<sheetData>`` (the prolog, the root element and its
  namespaces, sheet views before, merged cells and page setup after). It goes through lxml's
  feed parser with the guarded options of :mod:`auditor.read.xmlsafe`, so that part of the
  document is checked by the same parser as the lxml reader's, and the namespace and prefix of
  ``sheetData`` come from lxml itself;
* :func:`unescape`: the five predefined entities and character references, as XML 1.0 reads
  them (an undefined entity or a reference to a character XML forbids is not recognised);
* :func:`parse_element`: a small tokenizer for one element the hot pattern did not match (a cell
  with attributes in another order, single quotes, rich inline text, an extension element): it
  checks nesting, quoting, duplicate attributes and prefixes, and builds a tiny tree holding
  what lxml's ``.text`` and ``.get`` would give.
"""

from __future__ import annotations

import re
from typing import Any

from lxml import etree

from auditor.errors import UnreadableWorkbook
from auditor.read.xmlsafe import PARSER_OPTIONS, refuse_dtd


class Unrecognised(Exception):
    """The part holds something the scanner does not read exactly as lxml would."""


_NAME = r"[A-Za-z_][A-Za-z0-9_.\-]{0,200}(?::[A-Za-z_][A-Za-z0-9_.\-]{0,200})?"
_TAG = re.compile(
    rf"<(/?)({_NAME})((?:[ \t\n]+{_NAME}[ \t\n]*=[ \t\n]*(?:\"[^\"<]*\"|'[^'<]*'))*+)"
    r"[ \t\n]*(/?)>"
)
_ATTR = re.compile(rf"[ \t\n]+({_NAME})[ \t\n]*=[ \t\n]*(?:\"([^\"<]*)\"|'([^'<]*)')")
_TEXT = re.compile(r"[^<]+")
_REFERENCE = re.compile(r"&(?:(lt|gt|amp|quot|apos)|#([0-9]{1,7})|#x([0-9A-Fa-f]{1,6}));")
_ENTITIES = {"lt": "<", "gt": ">", "amp": "&", "quot": '"', "apos": "'"}
XML_NAMESPACE = "http://www.w3.org/XML/1998/namespace"
MAX_DEPTH = 24  # elements below a cell; lxml's own limit (256 from the root) is far above
# An XML declaration of version 1.0 in UTF-8 (or none: UTF-8 is the default).
_DECLARATION = re.compile(
    rb"(?:\xef\xbb\xbf)?(?:<\?xml[ \t\r\n]+version[ \t\r\n]*=[ \t\r\n]*[\"']1\.0[\"']"
    rb"(?:[ \t\r\n]+encoding[ \t\r\n]*=[ \t\r\n]*[\"'](?:utf|UTF)-8[\"'])?"
    rb"(?:[ \t\r\n]+standalone[ \t\r\n]*=[ \t\r\n]*[\"'](?:yes|no)[\"'])?[ \t\r\n]*\?>)?"
    rb"[ \t\r\n]*<"
)


def _character(match: re.Match[str]) -> str:
    name, decimal, hexadecimal = match.groups()
    if name:
        return _ENTITIES[name]
    code = int(decimal) if decimal else int(hexadecimal, 16)
    if not (
        code in (0x9, 0xA, 0xD)
        or 0x20 <= code <= 0xD7FF
        or 0xE000 <= code <= 0xFFFD
        or 0x10000 <= code <= 0x10FFFF
    ):
        raise Unrecognised(f"a reference to character {code:#x}, which XML forbids")
    return chr(code)


def unescape(text: str) -> str:
    """Character data with its references replaced; only what XML 1.0 defines without a DTD."""
    if "&" not in text:
        return text
    found = _REFERENCE.findall(text)
    if len(found) != text.count("&"):
        raise Unrecognised("an entity that is not one of XML's five predefined ones")
    return _REFERENCE.sub(_character, text)


def attributes(text: str, prefixes: dict[str, str]) -> dict[str, str]:
    """The attributes of one start tag (``text`` is what follows its name), as lxml's ``get``
    reads them: white space normalised, references replaced; names kept as written."""
    found: dict[str, str] = {}
    expanded: set[tuple[str, str]] = set()  # (namespace, local name): two prefixes, one space
    position = 0
    for match in _ATTR.finditer(text):
        if match.start() != position:
            raise Unrecognised("an attribute the scanner cannot delimit")
        position = match.end()
        name, double, single = match.groups()
        prefix, colon, local = name.rpartition(":")
        if colon and (prefix not in prefixes or prefix == "xmlns"):
            raise Unrecognised(f"an attribute with prefix {prefix!r}")
        qualified = (prefixes[prefix] if colon else "", local)
        if name == "xmlns" or qualified in expanded:
            raise Unrecognised(f"attribute {name!r} declared or given twice")
        expanded.add(qualified)
        value = double if double is not None else single
        found[name] = unescape(value.replace("\t", " ").replace("\n", " "))
    if text[position:].strip(" \t\n"):
        raise Unrecognised("an attribute the scanner cannot delimit")
    return found


class Node:
    """An element as the lxml reader sees it: tag (local name), ``get``, ``text``, children."""

    __slots__ = ("tag", "attrib", "text", "children")

    def __init__(self, tag: str, attrib: dict[str, str]) -> None:
        self.tag = tag
        self.attrib = attrib
        self.text: str | None = None
        self.children: list[Node] = []

    def get(self, name: str) -> str | None:
        return self.attrib.get(name)


def parse_element(
    buffer: str, position: int, end: int, prefix: str, prefixes: dict[str, str]
) -> tuple[Node, int]:
    """The element starting at ``position`` and the position after it. Every element inside
    must carry the main namespace's ``prefix`` (as written, with its colon, or "")."""
    stack: list[Node] = []
    while True:
        if position >= end:
            raise Unrecognised("an element that does not end inside its row")
        if buffer[position] != "<":
            text = _TEXT.match(buffer, position, end)
            if text is None or not stack:
                raise Unrecognised("text outside any element")
            position = text.end()
            parent = stack[-1]
            if not parent.children and parent.text is None:  # lxml's .text; tails are dropped
                parent.text = unescape(text.group())
            else:
                unescape(text.group())  # still checked
            continue
        tag = _TAG.match(buffer, position, end)
        if tag is None:
            raise Unrecognised("markup the scanner does not tokenise")
        position = tag.end()
        closing, name, attribute_text, empty = tag.groups()
        if not name.startswith(prefix) or ":" in name[len(prefix) :]:
            raise Unrecognised(f"element {name!r} outside the main namespace's prefix")
        local = name[len(prefix) :]
        if closing:
            if attribute_text or empty or not stack or stack[-1].tag != local:
                raise Unrecognised(f"end tag {name!r} that does not close its element")
            node = stack.pop()
            if not stack:
                return node, position
            continue
        node = Node(local, attributes(attribute_text, prefixes))
        if stack:
            stack[-1].children.append(node)
        if empty:
            if not stack:
                return node, position
        else:
            stack.append(node)
            if len(stack) > MAX_DEPTH:
                raise Unrecognised("elements nested deeper than a cell needs")


def plain_text(node: Node) -> str:
    """:func:`auditor.read.parts.plain_text` over a :class:`Node` (``<is>``: its ``<t>`` and
    its runs' ``<t>``, phonetic guides left out)."""
    pieces: list[str] = []
    for child in node.children:
        if child.tag == "t":
            if child.text:
                pieces.append(child.text)
        elif child.tag == "r":
            pieces.extend(g.text for g in child.children if g.tag == "t" and g.text)
    return "".join(pieces)


class Frame:
    """The part outside ``<sheetData>``, parsed by lxml's feed parser (guarded options)."""

    def __init__(self, ns: str) -> None:
        self.ns = ns
        self.merges: list[str] = []
        self._parser = etree.XMLPullParser(events=("start", "end"), **PARSER_OPTIONS)

    def head(self, data: bytes) -> tuple[str, dict[str, str], bool]:
        """Feed the part up to the end of the ``<sheetData>`` start tag: the prefix written on
        it ("x:" or ""), the prefixes in scope there, and whether it is empty."""
        if _DECLARATION.match(data) is None:
            raise Unrecognised("an XML declaration other than version 1.0 in UTF-8")
        events = self._feed(data)
        if not events or events[-1][1].tag != self.ns + "sheetData":
            raise Unrecognised("sheetData is not where the text says it is")
        element = events[-1][1]
        written = element.prefix
        prefixes = {p: uri for p, uri in element.nsmap.items() if p} | {"xml": XML_NAMESPACE}
        return ("" if written is None else written + ":"), prefixes, events[-1][0] == "end"

    def tail(self, data: bytes) -> None:
        self._feed(data)

    def close(self, where: str) -> None:
        try:
            refuse_dtd(self._parser.close(), where)
        except (etree.XMLSyntaxError, UnreadableWorkbook) as exc:
            raise Unrecognised(f"not well-formed or refused ({exc})") from exc

    def _feed(self, data: bytes) -> list[tuple[str, Any]]:
        try:
            self._parser.feed(data)
            events = list(self._parser.read_events())
        except etree.XMLSyntaxError as exc:
            raise Unrecognised(f"not well-formed ({exc})") from exc
        for event, element in events:
            if element.tag == self.ns + "row":
                raise Unrecognised("a row outside sheetData")
            if event == "end" and element.tag == self.ns + "mergeCell":
                self.merges.append(element.get("ref") or "")
        return events
