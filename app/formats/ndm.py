"""CCSDS Navigation Data Message text (ODM, CCSDS 502.0-B-3) as a stream of keyword items.

KVN (section 7): one ``KEYWORD = value [unit]`` per line, ``COMMENT`` lines,
block markers (``META_START``/``META_STOP``, ``COVARIANCE_START``/``STOP``,
``DATA_START``/``STOP``) and, in an OEM, raw ephemeris data lines. XML
(section 8 and the NDM/XML schemas, CCSDS 505.0-B): elements named like the
KVN keywords, units as a ``units`` attribute. Both are turned into the same
item stream, so the OPM, OMM and OEM readers handle one shape:

- ``Item("kv", line, key, value, unit)``
- ``Item("marker", line, name)``
- ``Item("data", line, tokens)`` (OEM ephemeris lines; XML ``stateVector``
  elements inside an OEM ``data`` block are rendered as such lines)

XML is parsed with ``defusedxml`` (no entity expansion, no external DTDs).
ElementTree does not keep line numbers, so an element's line is found by
locating its start tag in the text (the n-th ``<TAG`` for the n-th element).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from .common import FormatError, check_size, split_unit

MARKERS = ("META_START", "META_STOP", "COVARIANCE_START", "COVARIANCE_STOP", "DATA_START", "DATA_STOP")


@dataclass
class Item:
    kind: str
    line: int
    key: str = ""
    value: str = ""
    unit: str | None = None
    tokens: list[str] = field(default_factory=list)


_KV = re.compile(r"^([A-Z][A-Z0-9_]*)\s*=\s*(.*)$")


def kvn_items(text: str, what: str) -> list[Item]:
    check_size(text, what)
    items = []
    for n, raw in enumerate(text.splitlines(), start=1):
        s = raw.strip()
        if not s or s.startswith("COMMENT"):
            continue
        if s in MARKERS:
            items.append(Item("marker", n, s))
            continue
        m = _KV.match(s)
        if m:
            value, unit = split_unit(m[2])
            items.append(Item("kv", n, m[1], value, unit))
            continue
        items.append(Item("data", n, tokens=s.split()))
    return items


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1] if isinstance(tag, str) else ""


class LineFinder:
    """Line of the n-th occurrence of ``<TAG`` (namespace prefixes allowed) in the text."""

    def __init__(self, text: str):
        self.text = text
        self.seen: dict[str, int] = {}
        self.positions: dict[str, list[int]] = {}

    def line(self, tag: str) -> int:
        if tag not in self.positions:
            pat = re.compile(r"<(?:[A-Za-z_][\w.-]*:)?" + re.escape(tag) + r"[\s>/]")
            self.positions[tag] = [m.start() for m in pat.finditer(self.text)]
        k = self.seen.get(tag, 0)
        self.seen[tag] = k + 1
        pos = self.positions[tag]
        if k < len(pos):
            return self.text.count("\n", 0, pos[k]) + 1
        return 0


MAX_XML_DEPTH = 32
"""Deepest element nesting accepted in an XML message. An NDM nests 7 levels (ndm, oem, body,
segment, data, stateVector, X); the readers walk the tree recursively, so a hostile file nested
a thousand deep must be refused before they see it."""


def _check_depth(root, what: str) -> None:
    """FormatError when the tree nests deeper than MAX_XML_DEPTH (checked without recursion)."""
    stack = [(root, 1)]
    while stack:
        el, depth = stack.pop()
        if depth > MAX_XML_DEPTH:
            raise FormatError(None, "XML", f"the {what} nests XML elements more than {MAX_XML_DEPTH} "
                              f"deep (<{_local(el.tag)}> at depth {depth}); a navigation data message "
                              "needs fewer than 10 levels")
        stack.extend((c, depth + 1) for c in el)


STATE_FIELDS = ("EPOCH", "X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT", "X_DDOT", "Y_DDOT", "Z_DDOT")


def parse_xml(text: str, what: str):
    """Root element of an XML message (defusedxml); FormatError with the parser's line."""
    check_size(text, what)
    from defusedxml import DefusedXmlException
    from defusedxml.ElementTree import ParseError, fromstring

    try:
        root = fromstring(text)
    except ParseError as exc:
        line = getattr(exc, "position", (None,))[0]
        raise FormatError(line, "XML", f"the {what} is not well-formed XML ({exc})") from None
    except DefusedXmlException as exc:
        raise FormatError(None, "XML", f"the {what} uses a forbidden XML construct "
                          f"({type(exc).__name__}: entities and DTDs are refused)") from None
    _check_depth(root, what)
    return root


def xml_items(text: str, what: str, root=None, finder: LineFinder | None = None) -> list[Item]:
    """Item stream of an ODM in XML (one message; for NDM combined files pass each ``root`` and
    one shared ``finder`` so that line numbers keep counting through the file)."""
    if root is None:
        root = parse_xml(text, what)
    finder = finder or LineFinder(text)
    items: list[Item] = []

    def walk(el, in_oem_data: bool):
        tag = _local(el.tag)
        line = finder.line(tag)
        children = list(el)
        if tag == "metadata":
            items.append(Item("marker", line, "META_START"))
        if tag == "COMMENT":
            return
        if tag == "stateVector" and in_oem_data:
            values = {_local(c.tag): (c.text or "").strip() for c in children}
            for c in children:
                finder.line(_local(c.tag))
            tokens = [values[k] for k in STATE_FIELDS if k in values]
            missing = [k for k in STATE_FIELDS[:7] if k not in values]
            if missing:
                raise FormatError(line, missing[0], f"stateVector lacks {', '.join(missing)}")
            items.append(Item("data", line, tokens=tokens))
            return
        if tag == "covarianceMatrix" and in_oem_data:
            for sub in el.iter():
                finder.line(_local(sub.tag))
            return
        if not children:
            items.append(Item("kv", line, tag, (el.text or "").strip(), el.attrib.get("units")))
        for c in children:
            walk(c, in_oem_data or (tag == "data" and _local(root.tag) == "oem"))
        if tag == "metadata":
            items.append(Item("marker", line, "META_STOP"))

    walk(root, False)
    return items


def root_messages(text: str, what: str, message_tag: str):
    """The ``message_tag`` elements (e.g. 'omm') of an XML text: the root itself or, for an NDM
    combined instantiation (``<ndm>``), each child of that name."""
    root = parse_xml(text, what)
    tag = _local(root.tag)
    if tag == message_tag:
        return [root]
    if tag == "ndm":
        found = [c for c in root if _local(c.tag) == message_tag]
        if found:
            return found
    raise FormatError(1, "XML", f"the root element is <{tag}>, not <{message_tag}> (or <ndm> holding it)")


class Keywords:
    """Keyword lookup over a run of items, with the line numbers kept for errors."""

    def __init__(self, items: list[Item], start_line: int = 1, what: str = "message"):
        self.values: dict[str, Item] = {}
        self.start_line = start_line
        self.what = what
        for it in items:
            if it.kind == "kv":
                self.values.setdefault(it.key, it)

    def has(self, key: str) -> bool:
        return key in self.values and self.values[key].value != ""

    def item(self, key: str) -> Item:
        if not self.has(key):
            raise FormatError(self.start_line, key,
                              f"mandatory keyword {key} is missing from the {self.what}")
        return self.values[key]

    def get(self, key: str, default=None):
        return self.values[key].value if self.has(key) else default

    def line(self, key: str) -> int:
        return self.values[key].line if key in self.values else self.start_line
