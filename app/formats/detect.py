"""Guess the encoding of an OMM text (KVN, XML, JSON or CSV) and the kind of an ODM text.

Rules, in order, on the text with leading whitespace and a byte-order mark removed:
``<`` starts XML; ``{`` or ``[`` starts JSON; a first meaningful line holding
``KEYWORD =`` (CCSDS 502.0-B-3 section 7.4) is KVN; a first line of
comma-separated names that include EPOCH and MEAN_MOTION is CSV. Anything else is
a FormatError naming line 1.
"""

from __future__ import annotations

import re

from .common import FormatError

_KVN_LINE = re.compile(r"^[A-Z][A-Z0-9_]*\s*=")


def _first_line(text: str) -> str:
    for raw in text.splitlines():
        s = raw.strip()
        if s and not s.startswith("COMMENT"):
            return s
    return ""


def detect_omm_encoding(text: str) -> str:
    s = text.lstrip("\ufeff \t\r\n")
    if not s:
        raise FormatError(1, "text", "the OMM text is empty")
    if s.startswith("<"):
        return "xml"
    if s[0] in "{[":
        return "json"
    first = _first_line(s)
    if _KVN_LINE.match(first):
        return "kvn"
    names = {c.strip().strip('"').upper() for c in first.split(",")}
    if {"EPOCH", "MEAN_MOTION"} <= names:
        return "csv"
    raise FormatError(1, "text", "cannot tell the OMM encoding: expected KVN (KEYWORD = value), XML, "
                      "JSON or CSV with a header row of the mean-element keys")


def detect_odm_kind(text: str) -> str | None:
    """'opm', 'omm' or 'oem' from the version keyword or XML root, or None when unclear."""
    s = text.lstrip("\ufeff \t\r\n")[:4000]
    m = re.search(r"CCSDS_(OPM|OMM|OEM)_VERS", s)
    if m:
        return m[1].lower()
    m = re.search(r"<(?:\w+:)?(opm|omm|oem)[\s>]", s)
    return m[1] if m else None
