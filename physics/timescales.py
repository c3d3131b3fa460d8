"""The time scales a clock can be compared with, as one table of hops.

Each scale is a row: its parent, its rate against the parent (``d(scale)/d(parent) - 1``,
dimensionless) and its constant offset from the parent, with the source of the definition. A rate
of ``None`` marks a hop that depends on where the Earth or the Moon is (TCG against TCB, TN36
eq. 10.4; the lunar reference clock): a frame supplies it as an array. Every other hop is a
defining constant. Rates between two scales are looked up through their common ancestor, never
branched on names (in the spirit of astropy.time's table of scale hops):

    TCB --(frame: TN36 eq. 10.4)--> TCG --(-L_G)--> TT --(0, -32.184 s)--> TAI --(0, -19 s)--> GPS
    TCB --(-L_B, TDB0)--> TDB
    TCB --(frame: a clock on the Moon's mean equator)--> lunar_surface

The request's reference choices are generated from ``REFERENCE_NAMES``. Names are case-sensitive:
``"tt"`` is not a scale and fails here, naming the scales there are.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .constants import L_B, L_G, TAI_MINUS_GPS_S, TDB0_S, TT_MINUS_TAI_S


@dataclass(frozen=True)
class TimeScale:
    """One row of the table."""

    name: str
    parent: str | None
    rate_vs_parent: float | None
    """d(scale)/d(parent) - 1, dimensionless; None: supplied by the frame (depends on positions)."""
    offset_vs_parent_s: float | None
    """scale - parent, s, when constant (None where the two differ by a rate)."""
    definition: str
    conventional: bool
    """True for scales fixed by convention (IAU/IERS); False for a modelled reference clock."""


SCALES: dict[str, TimeScale] = {s.name: s for s in (
    TimeScale("TCB", None, 0.0, None, "Barycentric Coordinate Time, the BCRS coordinate time "
              "(IAU 2000 Resolution B1.3)", True),
    TimeScale("TCG", "TCB", None, None, "Geocentric Coordinate Time; d(TCG)/d(TCB) along the geocentre "
              "from the external potential and velocity of the Earth (TN36 eq. 10.4)", True),
    TimeScale("TT", "TCG", -L_G, None, "Terrestrial Time, d(TT)/d(TCG) = 1 - L_G (IAU 2000 Resolution "
              "B1.9, L_G defining)", True),
    TimeScale("TAI", "TT", 0.0, -TT_MINUS_TAI_S, "International Atomic Time, TT - TAI = 32.184 s "
              "(IAU 1991 Resolution A4)", True),
    TimeScale("GPS", "TAI", 0.0, -TAI_MINUS_GPS_S, "GPS time, TAI - GPS = 19 s (IS-GPS-200 section "
              "3.3.4)", True),
    TimeScale("TDB", "TCB", -L_B, None, f"Barycentric Dynamical Time, TDB = TCB - L_B (TCB - T0) + "
              f"TDB0, L_B defining, TDB0 = {TDB0_S} s (IAU 2006 Resolution B3)", True),
    TimeScale("lunar_surface", "TCB", None, None, "an ideal clock on the Moon's mean equatorial sphere "
              "(1737.4 km), turning with the Moon, in the full external potential at the Moon's centre "
              "(a modelled reference, not an adopted standard)", False),
)}

REFERENCE_NAMES: tuple[str, ...] = ("TT", "TAI", "GPS", "TCG", "TCB", "TDB", "lunar_surface")
"""The scales a request may name as its reference, in the order the API lists them."""

GEOCENTRIC_ROOT = "TCG"
"""The geocentric frame's coordinate time: scales below it need no positions of the Earth or Moon."""


def scale(name) -> TimeScale:
    """The row of ``name``; ``ValueError`` naming the scales for anything else (``"tt"`` included)."""
    row = SCALES.get(name) if isinstance(name, str) else None
    if row is None:
        hint = ""
        if isinstance(name, str) and name.upper() in {n.upper() for n in SCALES}:
            hint = " (names are case-sensitive)"
        raise ValueError(f"unknown time scale {name!r}{hint}; the scales are {', '.join(SCALES)}")
    return row


def _chain(name: str) -> list[str]:
    """``name`` and its ancestors up to the root."""
    out = [name]
    while SCALES[out[-1]].parent is not None:
        out.append(SCALES[out[-1]].parent)
    return out


def _rate_to(name: str, ancestor: str, frame_rates: Mapping[str, np.ndarray]):
    """d(name)/d(ancestor) - 1, composing the hops: (1 + a)(1 + b) - 1 = a + b + ab."""
    r = 0.0
    for n in _chain(name):
        if n == ancestor:
            return r
        hop = SCALES[n].rate_vs_parent
        if hop is None:
            try:
                hop = frame_rates[n]
            except KeyError:
                raise ValueError(f"the rate of {n} against {SCALES[n].parent} depends on the "
                                 "positions of the Earth or the Moon: use the barycentric frame") from None
        r = r + hop + r * hop
    raise AssertionError(f"{ancestor} is not an ancestor of {name}")  # pragma: no cover


def rate_between(name: str, against: str, frame_rates: Mapping[str, np.ndarray] | None = None):
    """d(name)/d(against) - 1, dimensionless (an array where a frame-supplied hop is involved).

    Through the common ancestor A: with r_x = d(x)/dA - 1, the rate is (r_n - r_a)/(1 + r_a), which
    is exactly 0 for two scales that share their rate (TT, TAI, GPS) and keeps every digit of a
    small difference. ``frame_rates``: the frame-supplied hops by scale name.
    """
    scale(name), scale(against)
    up = _chain(against)
    common = next(n for n in _chain(name) if n in up)
    rates = frame_rates or {}
    r_n, r_a = _rate_to(name, common, rates), _rate_to(against, common, rates)
    return (r_n - r_a) / (1.0 + r_a)


def needs_positions(name: str) -> bool:
    """Whether ``name``'s rate against TT needs a frame-supplied hop (so the barycentric frame)."""
    scale(name)
    return GEOCENTRIC_ROOT not in _chain(name)


def offset_between_s(name: str, against: str) -> float:
    """name - against, s, for two scales linked only by constant offsets (TT, TAI, GPS)."""
    scale(name), scale(against)

    def to_root(n):
        total, cur = 0.0, n
        while SCALES[cur].rate_vs_parent == 0.0 and SCALES[cur].offset_vs_parent_s is not None:
            total += SCALES[cur].offset_vs_parent_s
            cur = SCALES[cur].parent
        return total, cur

    (a, root_a), (b, root_b) = to_root(name), to_root(against)
    if root_a != root_b:
        raise ValueError(f"{name} and {against} differ by a rate, not by a constant offset")
    return a - b
