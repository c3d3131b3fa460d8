"""IGS RINEX clock files, versions 3.02 and 3.04: the AS (satellite clock) records.

Layout (J. Ray & W. Gurtner, "RINEX Extensions to Handle Clock Information",
version 3.02, 2010, and version 3.04, 2017): a header whose labels sit in
columns 61-80 (3.02) or 66-85 (3.04), ending with ``END OF HEADER``; the
version in columns 1-9 of ``RINEX VERSION / TYPE`` and the file type ``C``;
the time system in ``TIME SYSTEM ID`` (GPS when absent). Data records: type
(AR, AS, CR, DR, MS), name (4 characters in 3.02, 9 in 3.04), epoch (year,
month, day, hour, minute, second), the number of values that follow (1 to 6)
and the values (E19.12: clock bias in s, its sigma, rate, ...), continued on
the next line when more than the line holds. Fields are read by whitespace so
both name widths parse the same way.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .common import MAX_DATA_LINES, FormatError, check_size, make_time
from .sp3 import SP3_TIME_SYSTEMS

RECORD_TYPES = ("AR", "AS", "CR", "DR", "MS")


@dataclass
class RinexClock:
    version: float
    time_system: str
    satellites: dict[str, tuple] = field(default_factory=dict)  # id -> (Time array, bias_s, sigma_s)


def _value(tok: str, n: int) -> float:
    try:
        return float(tok.replace("D", "E").replace("d", "e"))
    except ValueError:
        raise FormatError(n, "clock value", f"{tok!r} is not a number") from None


def parse_rinex_clock(text: str) -> RinexClock:
    check_size(text, "RINEX clock file")
    lines = text.splitlines()
    if not lines or "RINEX VERSION / TYPE" not in lines[0]:
        raise FormatError(1, "RINEX VERSION / TYPE", "a RINEX clock file starts with RINEX VERSION / TYPE")
    head = lines[0].split()
    try:
        version = float(lines[0][:9])
    except ValueError:
        raise FormatError(1, "RINEX VERSION / TYPE",
                          f"version {lines[0][:9].strip()!r} is not a number") from None
    if not (3.0 <= version < 3.1):
        raise FormatError(1, "RINEX VERSION / TYPE", f"clock RINEX version {version:.2f} is not supported "
                          "(3.02 and 3.04 are)")
    if len(head) < 2 or not head[1].upper().startswith("C"):
        raise FormatError(1, "RINEX VERSION / TYPE", "the file type is not 'C' (clock data)")
    time_system = "GPS"
    end = None
    for n, line in enumerate(lines, start=1):
        if "END OF HEADER" in line:
            end = n
            break
        if "TIME SYSTEM ID" in line[55:]:
            time_system = line[:55].split()[0] if line[:55].split() else "GPS"
    if end is None:
        raise FormatError(len(lines), "END OF HEADER", "the header has no END OF HEADER line")
    if time_system not in SP3_TIME_SYSTEMS:
        raise FormatError(None, "TIME SYSTEM ID", f"time system {time_system!r} is not supported; "
                          f"readable: {', '.join(SP3_TIME_SYSTEMS)}")
    ours, shift = SP3_TIME_SYSTEMS[time_system]
    recs: dict[str, list] = {}
    i = end
    count = 0
    while i < len(lines):
        n = i + 1
        tok = lines[i].split()
        i += 1
        if not tok:
            continue
        if tok[0] not in RECORD_TYPES:
            raise FormatError(n, "record type",
                              f"{tok[0]!r} is not a clock record type ({', '.join(RECORD_TYPES)})")
        if len(tok) < 9:
            raise FormatError(n, tok[0], "a clock record holds type, name, epoch and the number of values")
        try:
            y, mo, d, h, mi = (int(x) for x in tok[2:7])
            n_vals = int(tok[8])
        except ValueError:
            raise FormatError(n, "epoch",
                              f"bad epoch or value count in {lines[n - 1].strip()[:40]!r}") from None
        sec = _value(tok[7], n)
        if not (1 <= mo <= 12 and 1 <= d <= 31 and 0 <= h <= 23 and 0 <= mi <= 59 and 0 <= sec < 61):
            raise FormatError(n, "epoch", "epoch out of range")
        if not 1 <= n_vals <= 6:
            raise FormatError(n, "number of values", f"{n_vals} values; a clock record holds 1 to 6")
        vals = [_value(t, n) for t in tok[9:]]
        while len(vals) < n_vals:
            nxt = lines[i].split() if i < len(lines) else []
            if not nxt or nxt[0] in RECORD_TYPES:
                raise FormatError(n, "number of values",
                                  f"the record announces {n_vals} values, {len(vals)} follow")
            vals += [_value(t, i + 1) for t in nxt]
            i += 1
        if len(vals) != n_vals:
            raise FormatError(n, "number of values",
                              f"{len(vals)} values where the record announces {n_vals}")
        if tok[0] == "AS":
            count += 1
            if count > MAX_DATA_LINES:
                raise FormatError(n, "size", f"more than {MAX_DATA_LINES:,} AS records")
            recs.setdefault(tok[1], []).append((y, mo, d, h, mi, sec + shift, vals[0],
                                                vals[1] if n_vals > 1 else np.nan, n))
    out = RinexClock(version, time_system)
    for sid, rows in recs.items():
        rows.sort(key=lambda r: r[:6])
        cols = [np.array(c, dtype=float) for c in zip(*(r[:6] for r in rows), strict=True)]
        times = make_time(cols, ours, rows[0][-1], "epoch")
        out.satellites[sid] = (times, np.array([r[6] for r in rows]), np.array([r[7] for r in rows]))
    return out
