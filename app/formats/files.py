"""An orbit file as the orbit block of a request: its type detected, the caller's options merged.

Used by the multipart uploads of app/api/uploads.py and by ``taubudget budget --orbit-file``.
Detection looks at the text with a byte-order mark and leading blank lines removed; the
first rule that matches wins:

1. ``#a``..``#d`` in columns 1-2: IGS SP3 (line 1 of SP3-c/SP3-d, Hilla 2010/2016; the
   parser names the versions it reads).
2. ``RINEX VERSION / TYPE`` on line 1: a RINEX clock file. It holds clock values, not an
   orbit, and is refused by name (``taubudget clock-residuals`` reads it).
3. The version keyword ``CCSDS_OPM_VERS`` / ``CCSDS_OMM_VERS`` / ``CCSDS_OEM_VERS`` or the XML
   root ``<opm>`` / ``<omm>`` / ``<oem>`` (CCSDS 502.0-B-3 sections 3.2, 4.2, 5.2 and annex
   H): that message.
4. JSON, or a CSV header row holding EPOCH and MEAN_MOTION: an OMM in those encodings
   (``app.formats.detect.detect_omm_encoding``).
5. A line starting ``1 `` followed by one starting ``2 ``: a file of two-line element sets.

Anything else is a FormatError on line 1, keyword ``type``: the caller can say the type.
"""

from __future__ import annotations

import re

from .common import FormatError
from .detect import detect_odm_kind, detect_omm_encoding

FILE_TYPES = ("omm", "opm", "oem", "sp3", "tle_file")
"""The ``type`` values an orbit file can have (the text orbits of app/formats/models.py)."""

ORBIT_OPTIONS = ("object_id", "encoding", "interpolation_degree", "force_model")
"""Fields of a text orbit besides ``type`` and ``text`` that a caller may add to a file."""

_SP3_LINE1 = re.compile(r"^#[a-dA-D][PV ]")
_DETECT_CHARS = 20_000  # enough for any header; detection never scans a whole large file


def _lines(text: str):
    return text.lstrip("\ufeff").lstrip("\r\n").splitlines()


def detect_file_type(text: str) -> str:
    """'omm', 'opm', 'oem', 'sp3' or 'tle_file' for an orbit file's text; FormatError otherwise."""
    head = text[:_DETECT_CHARS]
    lines = _lines(head)
    first = lines[0] if lines else ""
    if not first.strip():
        raise FormatError(1, "type", "the file is empty")
    if _SP3_LINE1.match(first):
        return "sp3"
    if "RINEX VERSION / TYPE" in first:
        raise FormatError(1, "RINEX VERSION / TYPE",
                          "this is a RINEX clock file (clock values, no orbit); send an orbit file "
                          "(OMM, OPM, OEM, SP3 or TLE), or analyse it with 'taubudget clock-residuals'")
    kind = detect_odm_kind(head)
    if kind is not None:
        return kind
    stripped = head.lstrip("\ufeff \t\r\n")
    if stripped[:1] in "{[":
        return "omm"
    try:
        if detect_omm_encoding(head) == "csv":
            return "omm"
    except FormatError:
        pass
    rows = [s.rstrip() for s in lines if s.strip()]
    for a, b in zip(rows, rows[1:], strict=False):
        if a.startswith("1 ") and b.startswith("2 "):
            return "tle_file"
    raise FormatError(1, "type", "cannot tell the file type: expected an OMM, OPM or OEM (CCSDS "
                      "502.0-B-3, KVN or XML; OMM also JSON or CSV), an SP3-c/d file or two-line "
                      f"element sets; give the type ({', '.join(FILE_TYPES)})")


def orbit_from_file(text: str, file_type: str | None = None, options: dict | None = None) -> dict:
    """The request's ``orbit`` block for a file: ``{"type": ..., "text": ..., **options}``.

    ``file_type`` overrides detection; ``options`` are the orbit's other fields (object_id,
    encoding, interpolation_degree, force_model). Validation of the block is the request
    model's job; this only refuses options that would replace the file.
    """
    options = dict(options or {})
    for key in ("text", "type"):
        if key in options:
            raise FormatError(None, key, f"the orbit's {key} comes from the file; do not give "
                              f"orbit.{key} as well")
    kind = file_type if file_type is not None else detect_file_type(text)
    return {"type": kind, "text": text, **options}
