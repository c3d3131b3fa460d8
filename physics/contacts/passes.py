"""Passes of a satellite over ground stations above an elevation mask.

Geometry: the satellite's GCRS position from its orbit source, rotated into the
ITRS with the span's coarse-grid Earth orientation (``physics.frames``); the
station's position and local vertical from skyfield's ``wgs84`` geodetic
coordinates. Elevation is the geometric (no refraction, no light time) angle of
the station-to-satellite vector above the plane normal to the geodetic
vertical, the same quantity skyfield's ``altaz`` gives for an Earth satellite
(``(satellite - topos).at(t).altaz()``).

Search: elevation minus mask on a uniform grid (vectorised over the grid, one
pass of the orbit source for all stations), sign changes refined with
``scipy.optimize.brentq``; grid local maxima that stay below the mask are
refined too, so a grazing pass shorter than the grid step is still found when
its peak clears the mask. Culmination: bounded scalar maximisation around the
highest grid sample of the pass. A pass already above the mask at the span
start (or still above at its end) is cut at the span edge and flagged.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from ..cancel import checkpoint
from ..errors import PhysicsInputError
from ..orbits import SurfaceClock

MIN_GRID_STEP_S = 5.0
MAX_GRID_STEP_S = 120.0
GRID_STEPS_PER_PERIOD = 200
"""Grid step = period / 200, clipped to [5, 120] s: ~28 s for a 95-minute orbit."""

TIME_TOLERANCE_S = 1e-3
"""Root and culmination refinement tolerance, s (passes are reported to a millisecond)."""

GRAZING_SEARCH_DEG = 10.0
"""Grid local maxima this far below the mask are refined, in case the true peak clears it."""

MIN_MASK_DEG = -5.0
MAX_MASK_DEG = 89.0


@dataclass(frozen=True)
class GroundStation:
    """A ground station: WGS-84 geodetic latitude/longitude (deg), ellipsoidal height (m), mask (deg).

    ``geoid_undulation_m`` only enters the station clock's own rate (the
    surface-clock model, ``physics.orbits.SurfaceClock``), used by the signal path.
    """

    name: str
    latitude_deg: float
    longitude_deg: float
    height_m: float = 0.0
    elevation_mask_deg: float = 10.0
    geoid_undulation_m: float | None = None

    def __post_init__(self):
        if not MIN_MASK_DEG <= self.elevation_mask_deg <= MAX_MASK_DEG:
            raise PhysicsInputError(
                "elevation_mask_deg", self.elevation_mask_deg,
                f"an elevation mask must lie in [{MIN_MASK_DEG:g}, {MAX_MASK_DEG:g}] degrees",
            )
        self.clock  # noqa: B018 - validates latitude and height through SurfaceClock

    @functools.cached_property
    def clock(self) -> SurfaceClock:
        """The station clock as a surface clock (its position and its own relativistic rate)."""
        return SurfaceClock(self.latitude_deg, self.longitude_deg, self.height_m,
                            self.geoid_undulation_m)

    @functools.cached_property
    def r_itrs_m(self) -> np.ndarray:
        return self.clock.r_itrs_m

    @functools.cached_property
    def up_itrs(self) -> np.ndarray:
        """Unit geodetic vertical (ellipsoid normal) in the ITRS."""
        lat, lon = math.radians(self.latitude_deg), math.radians(self.longitude_deg)
        return np.array([math.cos(lat) * math.cos(lon), math.cos(lat) * math.sin(lon), math.sin(lat)])


@dataclass(frozen=True)
class Pass:
    """One pass of the satellite above a station's mask; times in TT seconds since the span start."""

    station: str
    station_index: int
    aos_s: float
    los_s: float
    culmination_s: float
    max_elevation_deg: float
    aos_at_span_start: bool = False
    los_at_span_end: bool = False

    @property
    def duration_s(self) -> float:
        return self.los_s - self.aos_s


def elevation_deg(sat_itrs_m: np.ndarray, station: GroundStation) -> np.ndarray:
    """Geometric elevation (deg) of (N, 3) ITRS satellite positions seen from ``station``.

    NaN positions (nodes the orbit source could not compute) give NaN.
    """
    d = np.asarray(sat_itrs_m, dtype=float) - station.r_itrs_m
    sin_el = (d @ station.up_itrs) / np.linalg.norm(d, axis=-1)
    return np.degrees(np.arcsin(np.clip(sin_el, -1.0, 1.0)))


def satellite_itrs_m(source, span, t_s, orientation) -> np.ndarray:
    """(N, 3) ITRS positions (m) of an orbit source at TT seconds ``t_s``; NaN rows where it failed."""
    t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
    st = source.states(span, t_s, orientation)
    r = np.array(st.r_gcrs_m, dtype=float)
    r[st.code != 0] = np.nan
    return orientation.gcrs_to_itrs(r, t_s)


def grid_step_s(source) -> float:
    period = source.period_s()
    if period is None:
        return 60.0
    return float(np.clip(period / GRID_STEPS_PER_PERIOD, MIN_GRID_STEP_S, MAX_GRID_STEP_S))


def _crossings(f: np.ndarray):
    """Grid intervals where f changes sign: (rising, setting) index arrays (i: between i and i+1)."""
    above = f >= 0.0  # NaN counts as below
    rising = np.flatnonzero(~above[:-1] & above[1:])
    setting = np.flatnonzero(above[:-1] & ~above[1:])
    return rising, setting


def find_passes(source, span, stations, orientation=None, step_s: float | None = None) -> list[Pass]:
    """Passes of ``source`` over each station in ``stations`` during ``span``, sorted by AOS.

    ``orientation``: the span's Earth orientation (default: ``environment_for(span)``).
    ``step_s``: search grid step (default ``grid_step_s(source)``). Passes at the
    span edges are cut there and flagged (``aos_at_span_start``, ``los_at_span_end``).
    """
    if source.is_surface:
        raise PhysicsInputError("orbit", None, "a clock fixed on the ground has no passes over stations")
    if orientation is None:
        from ..environment import environment_for

        orientation = environment_for(span).orientation
    step = grid_step_s(source) if step_s is None else float(step_s)
    dur = float(span.duration_s)
    grid = np.arange(0.0, dur, step)
    grid = np.append(grid, dur)
    sat = satellite_itrs_m(source, span, grid, orientation)

    out: list[Pass] = []
    for k, sta in enumerate(stations):
        checkpoint()
        mask = sta.elevation_mask_deg

        def g(t, sta=sta, mask=mask):
            checkpoint()  # each root search is a scalar loop
            return float(elevation_deg(satellite_itrs_m(source, span, [t], orientation), sta)[0]) - mask

        f = elevation_deg(sat, sta) - mask
        rising, setting = _crossings(f)
        rises = [brentq(g, grid[i], grid[i + 1], xtol=TIME_TOLERANCE_S) for i in rising]
        sets = [brentq(g, grid[i], grid[i + 1], xtol=TIME_TOLERANCE_S) for i in setting]
        # Grazing passes hidden between grid samples: local maxima just below the mask.
        inner = np.arange(1, len(f) - 1)
        peak = inner[(f[inner] >= f[inner - 1]) & (f[inner] >= f[inner + 1])
                     & (f[inner] < 0.0) & (f[inner] > -GRAZING_SEARCH_DEG)]
        for i in peak:
            res = minimize_scalar(lambda t: -g(t), bounds=(grid[i - 1], grid[i + 1]), method="bounded",
                                  options={"xatol": TIME_TOLERANCE_S})
            if -res.fun > 0.0:
                rises.append(brentq(g, grid[i - 1], res.x, xtol=TIME_TOLERANCE_S))
                sets.append(brentq(g, res.x, grid[i + 1], xtol=TIME_TOLERANCE_S))
        events = sorted([(t, +1) for t in rises] + [(t, -1) for t in sets])
        up_at_start = f[0] >= 0.0
        t_open = 0.0 if up_at_start else None
        for t, kind in events:
            if kind > 0:
                t_open = t
            elif t_open is not None:
                out.append(_make_pass(g, sta.name, k, t_open, t, grid, f, t_open == 0.0 and up_at_start,
                                      False, mask))
                t_open = None
        if t_open is not None:
            out.append(_make_pass(g, sta.name, k, t_open, dur, grid, f,
                                  t_open == 0.0 and up_at_start, True, mask))
    out.sort(key=lambda p: (p.aos_s, p.station_index))
    return out


def _make_pass(g, name, k, aos, los, grid, f, cut_start, cut_end, mask) -> Pass:
    inside = np.flatnonzero((grid > aos) & (grid < los))
    if inside.size:
        j = inside[np.nanargmax(f[inside])]
        lo, hi = max(aos, grid[max(j - 1, 0)]), min(los, grid[min(j + 1, len(grid) - 1)])
    else:
        lo, hi = aos, los
    if hi - lo > TIME_TOLERANCE_S:
        res = minimize_scalar(lambda t: -g(t), bounds=(lo, hi), method="bounded",
                              options={"xatol": TIME_TOLERANCE_S})
        t_max, e_max = float(res.x), -float(res.fun)
    else:
        t_max, e_max = 0.5 * (lo + hi), g(0.5 * (lo + hi))
    # The edges can be the highest points of a pass cut by the span.
    for t_edge, is_cut in ((aos, cut_start), (los, cut_end)):
        if is_cut and g(t_edge) > e_max:
            t_max, e_max = t_edge, g(t_edge)
    return Pass(name, k, float(aos), float(los), float(t_max), float(e_max + mask), bool(cut_start),
                bool(cut_end))
