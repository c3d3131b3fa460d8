"""IGS SP3-c / SP3-d precise orbits: positions, optional velocities and the clock column.

Layout (S. Hilla, "The Extended Standard Product 3 Orbit Format (SP3-c)",
2010, and "(SP3-d)", 2016): line 1 ``#c`` or ``#d``, the P/V flag in column 3,
the coordinate system in columns 47-51 and the agency in 57-60; line 2 ``##``
with the epoch interval in columns 25-38; ``+`` lines listing the satellites
(count in columns 4-6, IDs from column 10, 17 per line, 3 characters each);
the first ``%c`` line holds the time system in columns 10-12; ``/*`` comments
(any number in SP3-d). Epoch lines ``*  YYYY MM DD hh mm ss.ssssssss``;
position records ``P`` + ID (columns 2-4), X, Y, Z in km (F14.6 at columns
5-18, 19-32, 33-46) and the clock in microseconds (F14.6, columns 47-60);
velocity records ``V`` with dm/s and 1e-4 microseconds/s. A position of
0.000000 and a clock of 999999.999999 mark missing values.

SP3 coordinates are Earth-fixed (the IGS/ITRF realisation named in the
header); they are rotated into the GCRS with ``EarthOrientation`` (without
polar motion; see app/formats/common.py). Time systems: GPS, and the
GPS-steered GAL and QZS scales taken as GPS (they differ from it by tens of
ns at most, irrelevant to epochs at planning level), BDT = GPS - 14 s, TAI,
UTC; GLO (UTC + 3 h) and others are refused by name.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from taubudget.physics.orbits.ephemeris_table import EphemerisTable, InconsistentStateError, Segment

from .common import MAX_DATA_LINES, FormatError, check_size, make_time, to_gcrs

MISSING_CLOCK_US = 999999.0
SP3_TIME_SYSTEMS = {"GPS": ("GPS", 0.0), "GAL": ("GPS", 0.0), "QZS": ("GPS", 0.0),
                    "BDT": ("GPS", 14.0), "TAI": ("TAI", 0.0), "UTC": ("UTC", 0.0)}
"""SP3 time system -> (our time system, seconds to add to reach it)."""

DEFAULT_DEGREE = 9
"""Lagrange degree for 15-minute SP3 orbits (common practice: 8 to 10 gives mm-level positions)."""
POSITION_STEP_KM = 1e-6
"""Positions are written F14.6 in km (Hilla 2016): a step of 1 mm."""
VELOCITY_STEP_DM_PER_S = 1e-6
"""Velocities are written F14.6 in dm/s: a step of 1e-7 m/s."""


@dataclass
class Sp3:
    version: str
    coordinate_system: str
    time_system: str
    interval_s: float
    satellites: list[str]
    epochs: object  # skyfield Time array
    epoch_lines: list[int]
    positions_km: dict[str, np.ndarray] = field(default_factory=dict)  # (N, 3), NaN where missing
    velocities_dm_per_s: dict[str, np.ndarray] | None = None
    clocks_us: dict[str, np.ndarray] = field(default_factory=dict)  # (N,), NaN where missing
    position_lines: dict[str, np.ndarray] = field(default_factory=dict)  # (N,) each P record's line, 0: none
    velocity_lines: dict[str, np.ndarray] = field(default_factory=dict)  # (N,) the same for V records


def _sat_id(field3: str) -> str:
    """'G01' from 'G01', 'G 1' or ' 1' (SP3-a style GPS numbers)."""
    system = field3[0] if field3[0] != " " else "G"
    return system + field3[1:3].replace(" ", "0")


def _float(s: str, n: int, keyword: str) -> float:
    try:
        return float(s)
    except ValueError:
        raise FormatError(n, keyword, f"{s.strip()!r} is not a number") from None


def parse_sp3(text: str) -> Sp3:
    check_size(text, "SP3 file")
    lines = text.splitlines()
    if not lines or not lines[0].startswith("#"):
        raise FormatError(1, "version", "an SP3 file starts with '#c' or '#d'")
    version = lines[0][1:2]
    if version not in ("c", "d"):
        raise FormatError(1, "version", f"SP3 version {version!r} is not supported (SP3-c and SP3-d are)")
    if len(lines) < 2 or not lines[1].startswith("##"):
        raise FormatError(2, "##", "the second line of an SP3 file starts with '##'")
    coord = lines[0][46:51].strip()
    interval = _float(lines[1][24:38], 2, "epoch interval")
    sats: list[str] = []
    n_sats = None
    time_system = None
    fields, epoch_lines = [], []
    recs_p: dict[str, dict[int, tuple]] = {}
    recs_v: dict[str, dict[int, tuple]] = {}
    seen_eof = False
    data_lines = 0
    for n, raw in enumerate(lines[2:], start=3):
        line = raw.rstrip()
        if not line:
            continue
        tag = line[:2]
        if line.startswith("EOF"):
            seen_eof = True
            break
        if tag == "+ ":
            if n_sats is None:
                n_sats = int(_float(line[3:6], n, "number of satellites"))
            body = line[9:60]
            for k in range(0, len(body), 3):
                sid = body[k:k + 3]
                if sid.strip().strip("0"):
                    sats.append(_sat_id(sid))
        elif tag == "%c" and time_system is None:
            time_system = line[9:12].strip() or "GPS"
        elif tag in ("++", "%c", "%f", "%i", "/*", "EP", "EV"):
            continue
        elif line.startswith("*"):
            tok = line[1:].split()
            if len(tok) < 6:
                raise FormatError(n, "epoch", "an epoch line holds year, month, day, hour, minute, second")
            try:
                y, mo, d, h, mi = (int(x) for x in tok[:5])
            except ValueError:
                raise FormatError(n, "epoch", f"bad epoch {line[1:].strip()!r}") from None
            sec = _float(tok[5], n, "epoch")
            if not (1 <= mo <= 12 and 1 <= d <= 31 and 0 <= h <= 23 and 0 <= mi <= 59 and 0 <= sec < 61):
                raise FormatError(n, "epoch", f"epoch {line[1:].strip()!r} is out of range")
            fields.append((y, mo, d, h, mi, sec))
            epoch_lines.append(n)
        elif line[0] in "PV" and len(line) >= 46:
            if not fields:
                raise FormatError(n, "epoch", "a record before the first epoch line")
            data_lines += 1
            if data_lines > MAX_DATA_LINES:
                raise FormatError(n, "size", f"more than {MAX_DATA_LINES:,} records")
            sid = _sat_id(line[1:4])
            xyz = tuple(_float(line[4 + 14 * k:18 + 14 * k], n, "XYZ"[k]) for k in range(3))
            clk = line[46:60].strip()
            clock = _float(clk, n, "clock") if clk else MISSING_CLOCK_US
            (recs_p if line[0] == "P" else recs_v).setdefault(sid, {})[len(fields) - 1] = (*xyz, clock, n)
        else:
            raise FormatError(n, line[:2].strip() or "record", f"unrecognised SP3 line {line[:20]!r}")
    if not seen_eof:
        raise FormatError(len(lines), "EOF", "the SP3 file has no EOF line (truncated?)")
    if time_system is None:
        raise FormatError(None, "%c", "the SP3 header has no '%c' line with the time system")
    if time_system not in SP3_TIME_SYSTEMS:
        raise FormatError(None, "%c", f"SP3 time system {time_system!r} is not supported; "
                          f"readable: {', '.join(SP3_TIME_SYSTEMS)}")
    if not fields:
        raise FormatError(None, "epoch", "the SP3 file holds no epochs")
    ours, shift = SP3_TIME_SYSTEMS[time_system]
    cols = [np.array(c, dtype=float) for c in zip(*fields, strict=True)]
    cols[5] = cols[5] + shift
    epochs = make_time(cols, ours, epoch_lines[0], "epoch")
    n_ep = len(fields)
    out = Sp3(version, coord, time_system, interval, sats, epochs, epoch_lines)
    for sid, recs in recs_p.items():
        pos = np.full((n_ep, 3), np.nan)
        clk = np.full(n_ep, np.nan)
        at = np.zeros(n_ep, dtype=int)
        for k, (x, y, z, c, n) in recs.items():
            if not (x == 0.0 and y == 0.0 and z == 0.0):
                pos[k] = (x, y, z)
            if abs(c) < MISSING_CLOCK_US:
                clk[k] = c
            at[k] = n
        out.positions_km[sid] = pos
        out.clocks_us[sid] = clk
        out.position_lines[sid] = at
    if recs_v:
        out.velocities_dm_per_s = {}
        for sid, recs in recs_v.items():
            vel = np.full((n_ep, 3), np.nan)
            at = np.zeros(n_ep, dtype=int)
            for k, (x, y, z, _c, n) in recs.items():
                vel[k] = (x, y, z)
                at[k] = n
            out.velocities_dm_per_s[sid] = vel
            out.velocity_lines[sid] = at
    return out


def select_satellite(sp3: Sp3, sat_id: str | None) -> str:
    have = sorted(sp3.positions_km)
    if sat_id is None:
        if len(have) != 1:
            raise FormatError(None, "object_id", f"the SP3 file holds {len(have)} satellites "
                              f"({', '.join(have[:12])}{', ...' if len(have) > 12 else ''}); give object_id")
        return have[0]
    sid = sat_id.strip().upper()
    if sid not in sp3.positions_km:
        raise FormatError(None, "object_id", f"satellite {sid!r} is not in the SP3 file "
                          f"(it holds {', '.join(have)})")
    return sid


def sp3_source(sp3: Sp3, sat_id: str, degree: int = DEFAULT_DEGREE):
    """An EphemerisTable in the GCRS for one satellite; gaps split the data into segments."""
    pos = sp3.positions_km[sat_id]
    ok = np.all(np.isfinite(pos), axis=1)
    vel = None
    if sp3.velocities_dm_per_s is not None and sat_id in sp3.velocities_dm_per_s:
        vel = sp3.velocities_dm_per_s[sat_id]
        ok &= np.all(np.isfinite(vel), axis=1)
    idx = np.nonzero(ok)[0]
    if idx.size < 2:
        raise FormatError(None, "object_id", f"satellite {sat_id} has fewer than two valid positions")
    times = sp3.epochs[idx]
    r, v = to_gcrs("ITRF", times, pos[idx] * 1e3, None if vel is None else vel[idx] * 0.1)
    ref = times[0]
    whole = np.asarray(times.whole) - ref.whole
    t_s = (whole + (np.asarray(times.tt_fraction) - ref.tt_fraction)) * 86400.0
    # Never interpolate across a gap: split where consecutive epochs are > 1.5 intervals apart.
    breaks = np.nonzero(np.diff(t_s) > 1.5 * sp3.interval_s)[0] + 1
    segments, epochs = [], []  # epochs: per segment, the epoch index of each point
    for part in np.split(np.arange(idx.size), breaks):
        if part.size < 2:
            continue
        segments.append(Segment(t_s[part], r[part], None if v is None else v[part], interpolation="LAGRANGE",
                                degree=min(degree, part.size - 1),
                                label=f"SP3 {sat_id}, {sp3.coordinate_system} -> GCRS",
                                position_resolution_m=POSITION_STEP_KM * 1e3,
                                velocity_resolution_m_per_s=VELOCITY_STEP_DM_PER_S * 0.1))
        epochs.append(idx[part])

    def line_of(segment: int, point: int, quantity: str) -> int:
        lines = sp3.position_lines if quantity == "position" else sp3.velocity_lines
        return int(lines[sat_id][epochs[segment][point]])

    def point_name(segment: int, point: int, quantity: str, axis: int) -> str:
        return f"line {line_of(segment, point, quantity)}, {_keyword(quantity, axis)}"

    try:
        return EphemerisTable(ref, segments, label=f"SP3-{sp3.version} {sat_id} ({sp3.coordinate_system}, "
                              f"{sp3.time_system}), Lagrange degree {degree}", point_name=point_name)
    except InconsistentStateError as exc:  # a corrupted record: named by its line and field
        raise FormatError(line_of(exc.segment, exc.point, exc.quantity), _keyword(exc.quantity, exc.axis),
                          f"satellite {sat_id}: {exc.detail}") from None


def _keyword(quantity: str, axis: int) -> str:
    """The record of a position (P) or velocity (V). Not its component: the table compares GCRS
    vectors, whose axes are not the file's Earth-fixed ones."""
    return ("P" if quantity == "position" else "V") + " record"


def clock_series(sp3: Sp3, sat_id: str):
    """(epochs Time, clock offset s) of the valid clock values of one satellite."""
    clk = sp3.clocks_us[sat_id]
    ok = np.isfinite(clk)
    return sp3.epochs[np.nonzero(ok)[0]], clk[ok] * 1e-6
