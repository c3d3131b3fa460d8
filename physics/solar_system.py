"""Barycentric positions and velocities of the Sun, Moon, Earth and planets (DE421).

States come from the DE421 kernel inside skyfield-data through jplephem's
Chebyshev segments (Folkner et al. 2009), in the BCRS with TDB as time
argument. Lengths and times in DE421 are TDB-compatible; GM/r and v^2 are the
same in TCB-compatible units (numerator and denominator of each scale by
1 - L_B, so the ratios do not change), so the proper-time rate
dtau/dTCB = 1 - (v^2/2 + U)/c^2 can use them as they are.

For a budget, the states are evaluated on a coarse grid (``GRID_STEP_S``) and
interpolated with cubic splines (error bounded in tests/physics/test_barycentric.py);
long reference integrations call ``barycentric_states`` at the nodes directly.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline

from .constants import (
    GM_EARTH_DE421_M3_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_PLANET_SYSTEMS_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    SECONDS_PER_DAY,
)
from .ephemeris import ephemeris
from .frames import coarse_grid_s

GRID_STEP_S = 3600.0
PLANETS = ("mercury", "venus", "mars", "jupiter", "saturn", "uranus", "neptune")
BODIES = ("sun", "earth", "moon") + PLANETS

GM_M3_PER_S2 = {"sun": GM_SUN_M3_PER_S2, "earth": GM_EARTH_DE421_M3_PER_S2, "moon": GM_MOON_M3_PER_S2,
                **GM_PLANET_SYSTEMS_M3_PER_S2}
"""GM of each body (planets: system barycentres), m^3/s^2, TDB-compatible (DE421 Table 4)."""

# NAIF chains from the solar-system barycentre (0) to each body.
_CHAINS = {
    "sun": ((0, 10),),
    "earth": ((0, 3), (3, 399)),
    "moon": ((0, 3), (3, 301)),
    "mercury": ((0, 1),), "venus": ((0, 2),), "mars": ((0, 4),), "jupiter": ((0, 5),),
    "saturn": ((0, 6),), "uranus": ((0, 7),), "neptune": ((0, 8),),
}


def barycentric_states(bodies, tdb_whole, tdb_fraction):
    """{body: (r_bcrs_m (N, 3), v_bcrs_m_per_s (N, 3))} at TDB Julian dates whole + fraction."""
    spk = ephemeris().spk
    whole = np.asarray(tdb_whole, dtype=float)
    frac = np.asarray(tdb_fraction, dtype=float)
    whole, frac = np.broadcast_arrays(whole, frac)
    cache = {}
    out = {}
    for body in bodies:
        r = 0.0
        v = 0.0
        for pair in _CHAINS[body]:
            if pair not in cache:
                pos_km, vel_km_per_day = spk[pair].compute_and_differentiate(whole, frac)
                cache[pair] = (pos_km.T * 1e3, vel_km_per_day.T * (1e3 / SECONDS_PER_DAY))
            r = r + cache[pair][0]
            v = v + cache[pair][1]
        out[body] = (np.atleast_2d(r), np.atleast_2d(v))
    return out


@dataclass
class SolarSystem:
    """Interpolated BCRS states of all bodies over one span."""

    span: object
    _pos: dict
    _vel: dict

    @classmethod
    def for_span(cls, span, step_s: float = GRID_STEP_S) -> SolarSystem:
        grid = coarse_grid_s(span, step_s)
        t = span.times(grid)
        states = barycentric_states(BODIES, t.whole, t.tdb_fraction)
        pos = {b: CubicSpline(grid, states[b][0]) for b in BODIES}
        vel = {b: CubicSpline(grid, states[b][1]) for b in BODIES}
        return cls(span, pos, vel)

    def position_m(self, body: str, t_s) -> np.ndarray:
        return self._pos[body](t_s)

    def velocity_m_per_s(self, body: str, t_s) -> np.ndarray:
        return self._vel[body](t_s)


@functools.lru_cache(maxsize=8)
def _cached(whole: float, tt_fraction: float, duration_s: float) -> SolarSystem:
    from .ephemeris import timescale
    from .span import Span

    ts = timescale()
    return SolarSystem.for_span(Span(ts.tt_jd(whole, tt_fraction), duration_s))


def solar_system_for(span) -> SolarSystem:
    """The (cached) solar-system interpolants of ``span``."""
    return _cached(float(span.start.whole), float(span.start.tt_fraction), float(span.duration_s))
