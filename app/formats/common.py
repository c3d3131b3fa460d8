"""Shared pieces of the open-format parsers: errors, size limits, epochs, time systems, frames.

Epochs (CCSDS 502.0-B-3 section 7.5.10, and the ASCII time code of CCSDS
301.0-B-4 section 3.5.1): ``YYYY-MM-DDThh:mm:ss[.d...][Z]`` or the day-of-year
form ``YYYY-DDDThh:mm:ss[.d...][Z]``; fractions are optional. The time system
comes from the message (TIME_SYSTEM): UTC, TAI, TT and GPS are taken
(GPS = TAI - 19 s, IS-GPS-200 section 3.3.4); others are refused by name.

Reference frames (REF_FRAME, CCSDS 502.0-B-3 annex A / SANA registry) are turned
into GCRS vectors:

- GCRF, ICRF: GCRS axes already (ICRF axes centred on the Earth); identity.
- EME2000 (J2000 mean equator and equinox): rotated by the IERS frame bias
  (xi0 = -16.617 mas, eta0 = -6.819 mas, da0 = -14.6 mas; TN36 section 5.5.4,
  eq. 5.21), skyfield's ``framelib.ICRS_to_J2000``. The bias is ~23 mas, 3 m
  at GPS radius: it changes no clock rate measurably (|r| and |v| are
  unchanged; only the zonal and tidal geometry see 1e-7 rad), but we apply it
  rather than pretend the frames are equal.
- TEME (SGP4's frame): skyfield's TEME -> GCRS rotation via the coarse-grid
  ``EarthOrientation``; the velocity is rotated with the position (TEME's own
  rotation rate, ~1e-11 rad/s, is neglected: < 1e-4 m/s in LEO).
- ITRF (any realisation, e.g. ITRF2014): Earth-fixed; position rotated into the
  GCRS and the velocity given the Earth's spin, v_gcrs = R v_itrf + omega x r
  (``EarthOrientation.itrs_to_gcrs``). Polar motion is not in the builtin
  timescale, which moves GCRS positions by up to ~15 m at GPS radius but changes
  the rate by < 1e-19 (physics/frames/orientation.py).

Anything else (TOD, MOD, ...) is refused by name.
"""

from __future__ import annotations

import calendar
import datetime as _dt
import re

import numpy as np
from skyfield.framelib import ICRS_to_J2000
from taubudget.physics.ephemeris import timescale
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.frames import EarthOrientation
from taubudget.physics.span import Span

MAX_TEXT_CHARS = 5_000_000
"""Largest message the parsers read, characters (about 30 days of 60 s OEM states)."""

MAX_DATA_LINES = 200_000
"""Largest number of ephemeris points in one message."""

TIME_SYSTEMS = ("UTC", "TAI", "TT", "GPS")
GPS_MINUS_TAI_S = -19.0
"""GPS time = TAI - 19 s (IS-GPS-200 section 3.3.4; constant since 1980)."""

GCRS_LIKE_FRAMES = ("GCRF", "ICRF")
FRAMES_ACCEPTED = ("GCRF", "ICRF", "EME2000", "TEME", "ITRF")


class FormatError(ValueError):
    """A message that cannot be read: the line (1-based, or None for the whole text), the keyword
    or field concerned, and the reason in plain words."""

    def __init__(self, line_number: int | None, keyword: str, reason: str):
        where = f"line {line_number}" if line_number else "the text"
        super().__init__(f"{where}, {keyword}: {reason}")
        self.line_number = line_number
        self.keyword = keyword
        self.reason = reason

    def to_physics(self, field: str = "orbit.text") -> PhysicsInputError:
        return PhysicsInputError(field, self.keyword, str(self))


def check_size(text: str, what: str, limit: int = MAX_TEXT_CHARS) -> None:
    if not isinstance(text, str):
        raise FormatError(None, "text", f"the {what} must be text")
    if len(text) > limit:
        raise FormatError(None, "size", f"the {what} holds {len(text):,} characters, above the "
                          f"limit of {limit:,}; split it or thin the data")
    if "\x00" in text:
        raise FormatError(None, "text", f"the {what} contains NUL characters; is it a binary file?")


_EPOCH_CAL = re.compile(r"^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2}):(\d{2}(?:\.\d*)?)(Z?)$")
_EPOCH_DOY = re.compile(r"^(\d{4})-(\d{3})T(\d{2}):(\d{2}):(\d{2}(?:\.\d*)?)(Z?)$")


def parse_epoch_fields(text: str, line: int | None, keyword: str):
    """(year, month, day, hour, minute, second) from a CCSDS ASCII epoch; FormatError if bad."""
    s = text.strip()
    m = _EPOCH_CAL.match(s)
    if m:
        y, mo, d, h, mi, sec = (int(m[1]), int(m[2]), int(m[3]), int(m[4]), int(m[5]), float(m[6]))
        try:
            _dt.date(y, mo, d)
        except ValueError as exc:
            raise FormatError(line, keyword, f"epoch {s!r} is not a calendar date ({exc})") from exc
    else:
        m = _EPOCH_DOY.match(s)
        if not m:
            raise FormatError(
                line, keyword,
                f"epoch {s!r} is not CCSDS ASCII time (YYYY-MM-DDThh:mm:ss[.fff][Z] or "
                "YYYY-DDDThh:mm:ss[.fff][Z])",
            )
        y, doy, h, mi, sec = int(m[1]), int(m[2]), int(m[3]), int(m[4]), float(m[5])
        if not 1 <= doy <= (366 if calendar.isleap(y) else 365):
            raise FormatError(line, keyword, f"day of year {doy} does not exist in {y}")
        date = _dt.date(y, 1, 1) + _dt.timedelta(days=doy - 1)
        mo, d = date.month, date.day
    if h > 23 or mi > 59 or sec >= 61.0:
        raise FormatError(line, keyword, f"epoch {s!r} has an hour, minute or second out of range")
    return y, mo, d, h, mi, sec


def make_time(fields, time_system: str, line: int | None = None, keyword: str = "EPOCH"):
    """skyfield Time from epoch fields in the given time system (UTC, TAI, TT, GPS)."""
    ts = timescale()
    y, mo, d, h, mi, sec = fields
    if np.any(np.asarray(sec) >= 60.0) and time_system != "UTC":
        raise FormatError(line, keyword, f"second {sec} exists only in UTC (a leap second)")
    if time_system == "UTC":
        return ts.utc(y, mo, d, h, mi, sec)
    if time_system == "TAI":
        return ts.tai(y, mo, d, h, mi, sec)
    if time_system == "TT":
        return ts.tt(y, mo, d, h, mi, sec)
    if time_system == "GPS":
        return ts.tai(y, mo, d, h, mi, sec - GPS_MINUS_TAI_S)
    raise FormatError(line, "TIME_SYSTEM", f"time system {time_system!r} is not one of "
                      f"{', '.join(TIME_SYSTEMS)}")


def parse_epoch(text: str, time_system: str, line: int | None, keyword: str = "EPOCH"):
    return make_time(parse_epoch_fields(text, line, keyword), time_system, line, keyword)


def check_time_system(value: str, line: int | None) -> str:
    v = value.strip().upper()
    if v not in TIME_SYSTEMS:
        raise FormatError(line, "TIME_SYSTEM",
                          f"TIME_SYSTEM {value!r} is not supported; this service reads "
                          f"{', '.join(TIME_SYSTEMS)}")
    return v


def normalise_frame(value: str, line: int | None, allowed=FRAMES_ACCEPTED) -> str:
    """Canonical frame name ('GCRF', 'ICRF', 'EME2000', 'TEME', 'ITRF'); FormatError otherwise."""
    v = value.strip().upper()
    canon = "ITRF" if re.fullmatch(r"ITRF(-?\d{2,4})?", v) else v
    if canon not in allowed:
        raise FormatError(line, "REF_FRAME",
                          f"REF_FRAME {value!r} is not supported; give one of {', '.join(allowed)}")
    return canon


def check_center(value: str, line: int | None) -> None:
    if value.strip().upper() != "EARTH":
        raise FormatError(line, "CENTER_NAME",
                          f"CENTER_NAME {value!r}: only Earth-centred orbits are read from messages")


_B = np.asarray(ICRS_to_J2000)  # GCRS -> J2000 mean (frame bias), TN36 eq. 5.21


def to_gcrs(frame: str, times, r_m: np.ndarray, v_m_per_s: np.ndarray | None):
    """GCRS position (m) and velocity (m/s) from a message frame at skyfield Time(s) ``times``.

    ``r_m``, ``v_m_per_s``: (N, 3); ``times``: a skyfield Time of N instants (or one).
    """
    r = np.atleast_2d(np.asarray(r_m, dtype=float))
    v = None if v_m_per_s is None else np.atleast_2d(np.asarray(v_m_per_s, dtype=float))
    if frame in GCRS_LIKE_FRAMES:
        return r, v
    if frame == "EME2000":
        return r @ _B, (None if v is None else v @ _B)  # r_gcrs = B^T r_j2000
    # Earth-orientation frames: evaluate the coarse-grid rotation over the points' span.
    jd_tt = np.atleast_1d(np.asarray(times.tt, dtype=float))
    first = int(np.argmin(jd_tt))
    start = times[first] if jd_tt.size > 1 else times
    t0 = timescale().tt_jd(np.atleast_1d(start.whole)[0], np.atleast_1d(start.tt_fraction)[0] - 1.0 / 24)
    span_s = float((jd_tt.max() - jd_tt.min()) * 86400.0) + 2 * 3600.0
    span = Span(t0, span_s)
    orientation = EarthOrientation.for_span(span)
    t_s = np.broadcast_to(np.atleast_1d(span.seconds_after_start(times)), (r.shape[0],))
    if frame == "TEME":
        return (orientation.teme_to_gcrs(r, t_s),
                None if v is None else orientation.teme_to_gcrs(v, t_s))
    if frame == "ITRF":
        r_g, spin = orientation.itrs_to_gcrs(r, t_s)
        if v is None:
            return r_g, None
        v_rot, _ = orientation.itrs_to_gcrs(v, t_s)
        return r_g, v_rot + spin
    raise FormatError(None, "REF_FRAME", f"frame {frame!r} is not supported")  # pragma: no cover


def parse_float(value: str, line: int | None, keyword: str) -> float:
    try:
        x = float(value)
    except ValueError:
        raise FormatError(line, keyword, f"{value!r} is not a number") from None
    if not np.isfinite(x):
        raise FormatError(line, keyword, f"{value!r} is not a finite number")
    return x


_UNIT = re.compile(r"^(.*?)\s*\[([^\]]*)\]\s*$")


def split_unit(value: str) -> tuple[str, str | None]:
    m = _UNIT.match(value)
    return (m[1].strip(), m[2].strip()) if m else (value.strip(), None)


def check_unit(unit: str | None, expected: tuple[str, ...], line: int | None, keyword: str) -> None:
    """A unit given in brackets (KVN) or as an attribute (XML) must be the standard's unit."""
    if unit is None or not expected:
        return
    u = unit.strip().lower().replace(" ", "")
    if u not in tuple(e.lower() for e in expected):
        raise FormatError(line, keyword, f"unit [{unit}] is not the standard's [{expected[0]}]")
