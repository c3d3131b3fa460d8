"""Files of two-line element sets: several objects, optional name lines, checksums verified.

Layout (the element-set format, e.g. Vallado et al. 2006, AIAA 2006-6753,
appendix; Hoots & Roehrich 1980, Spacetrack Report No. 3): each object is a
line starting ``1 `` and a line starting ``2 ``, 69 characters each, column 69
holding the modulo-10 checksum of columns 1-68 (digits count their value, a
minus sign counts 1, everything else 0). An optional name line (up to 24
characters by custom, optionally prefixed ``0 ``) may precede each pair.
Blank lines are skipped. Every fault names its line.
"""

from __future__ import annotations

from dataclasses import dataclass

from taubudget.physics.orbits.tle import tle_checksum_ok

from .common import FormatError, check_size

MAX_OBJECTS = 5_000


@dataclass
class TleEntry:
    name: str | None
    line1: str
    line2: str
    line_number: int  # of line 1

    @property
    def catalogue_number(self) -> str:
        return self.line1[2:7].strip()


def _checksum(line: str) -> int:
    return sum(int(ch) if ch.isdigit() else (1 if ch == "-" else 0) for ch in line[:68]) % 10


def _check_line(text: str, n: int, number: str) -> None:
    if len(text) != 69:
        raise FormatError(n, f"line {number}", f"a TLE line has 69 characters, this one {len(text)}")
    if not tle_checksum_ok(text):
        raise FormatError(n, "checksum", f"TLE line {number} fails its modulo-10 checksum: column 69 holds "
                          f"{text[68]!r}, columns 1-68 give {_checksum(text)}")


def parse_tle_file(text: str) -> list[TleEntry]:
    check_size(text, "TLE file")
    lines = [(n, raw.rstrip("\r\n").rstrip()) for n, raw in enumerate(text.splitlines(), start=1)]
    lines = [(n, s) for n, s in lines if s.strip()]
    out: list[TleEntry] = []
    pending_name = None
    i = 0
    while i < len(lines):
        n, s = lines[i]
        if s.startswith("1 ") and len(s) >= 60:
            if i + 1 >= len(lines) or not lines[i + 1][1].startswith("2 "):
                raise FormatError(n, "line 2", "a TLE line 1 must be followed by its line 2")
            n2, s2 = lines[i + 1]
            _check_line(s, n, "1")
            _check_line(s2, n2, "2")
            if s[2:7] != s2[2:7]:
                raise FormatError(n2, "catalogue number",
                                  f"line 2 carries catalogue number {s2[2:7]!r}, line 1 {s[2:7]!r}")
            out.append(TleEntry(pending_name, s, s2, n))
            pending_name = None
            i += 2
            if len(out) > MAX_OBJECTS:
                raise FormatError(n, "size", f"more than {MAX_OBJECTS} element sets in one file")
            continue
        if s.startswith("2 ") and len(s) >= 60:
            raise FormatError(n, "line 1", "a TLE line 2 without its line 1")
        if pending_name is not None:
            raise FormatError(n, "name", f"two name lines in a row ({pending_name!r}, then {s.strip()!r})")
        name = s[2:].strip() if s.startswith("0 ") else s.strip()
        if len(name) > 69:
            raise FormatError(n, "name", "a name line is longer than a TLE line; is this a TLE file?")
        pending_name = name
        i += 1
    if pending_name is not None:
        raise FormatError(lines[-1][0], "line 1", f"name line {pending_name!r} has no element set after it")
    if not out:
        raise FormatError(None, "line 1", "the file holds no two-line element set")
    return out


def select(entries: list[TleEntry], object_id: str | None) -> TleEntry:
    if object_id is None:
        if len(entries) > 1:
            raise FormatError(entries[1].line_number, "object_id",
                              f"the file holds {len(entries)} element sets; give object_id (a name or a "
                              "catalogue number) or send it to the batch endpoint")
        return entries[0]
    want = object_id.strip()
    for e in entries:
        if want in (e.name, e.catalogue_number, e.catalogue_number.lstrip("0")):
            return e
    raise FormatError(None, "object_id", f"no element set named or numbered {want!r} in the file")
