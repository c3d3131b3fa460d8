"""Orbit sources far from the Earth, with states in the BCRS.

- ``CentredKeplerianOrbit``: two-body elements around the Sun, the Moon or Mars
  (axes: ICRF equator, or the J2000 ecliptic on request), carried to the BCRS
  with the centre's DE421 state.
- ``BodySurfaceClock``: a clock fixed on the Moon or Mars (planetocentric
  latitude, longitude, height above the mean sphere), oriented by the IAU
  rotation elements (``physics.body_rotation``).
- ``EarthSourceInBcrs``: any Earth-centred source carried into the BCRS by
  adding the geocentre's DE421 state (Galilean sum; the Lorentz terms of the
  GCRS -> BCRS transformation, ~1e-8 of the geocentric vectors, are omitted).

Each gives, besides r and v, the r.v of the clock relative to its own centre
(for the eccentricity term; none for a clock fixed on a body) and names that
centre's rate term.
"""

from __future__ import annotations

import math

import numpy as np

from ..body_rotation import MARS_ROTATION_RATE_RAD_PER_S, MOON_ROTATION_RATE_RAD_PER_S, body_fixed_to_icrf
from ..constants import (
    GM_MOON_M3_PER_S2,
    GM_PLANET_SYSTEMS_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    MARS_MEAN_RADIUS_M,
    MARS_SIDEREAL_PERIOD_S,
    MOON_ANOMALISTIC_MONTH_S,
    MOON_MEAN_RADIUS_M,
    OBLIQUITY_J2000_RAD,
    SUN_NOMINAL_RADIUS_M,
)
from ..errors import PhysicsInputError
from ..kepler import elements_to_state
from .base import OrbitSource, States

CENTRES = {
    "sun": (GM_SUN_M3_PER_S2, SUN_NOMINAL_RADIUS_M, "sun"),
    "moon": (GM_MOON_M3_PER_S2, MOON_MEAN_RADIUS_M, "moon"),
    "mars": (GM_PLANET_SYSTEMS_M3_PER_S2["mars"], MARS_MEAN_RADIUS_M, "mars"),
}
"""centre: (GM m^3/s^2, radius m, name of its rate term)."""

MAX_APOAPSIS_M = {"sun": 1.5e14, "moon": 6.2e7, "mars": 1.08e9}
"""Largest apoapsis accepted, m: the Hill spheres of the Moon (~61,500 km) and Mars (~1.08e6 km),
common practice; around the Sun ~1,000 au, beyond which DE421's bodies are not the whole story."""

_ROTATION = {"moon": MOON_ROTATION_RATE_RAD_PER_S, "mars": MARS_ROTATION_RATE_RAD_PER_S}
_RADIUS = {"moon": MOON_MEAN_RADIUS_M, "mars": MARS_MEAN_RADIUS_M}


def _ecliptic_to_equator() -> np.ndarray:
    c, s = math.cos(OBLIQUITY_J2000_RAD), math.sin(OBLIQUITY_J2000_RAD)
    return np.array([[1.0, 0.0, 0.0], [0.0, c, -s], [0.0, s, c]])


def _d_tdb(span, t_s):
    t = span.times(t_s)
    return (np.asarray(t.whole) - 2451545.0) + np.asarray(t.tdb_fraction)


class BarycentricSource(OrbitSource):
    frame = "BCRS"
    primary_term = "sun"
    offers_eccentricity_correction = True
    """Whether a user segment corrects -(2/c^2) r.v of this clock around its own centre."""

    def states_bcrs(self, span, t_s, solar_system, orientation) -> States:  # pragma: no cover
        raise NotImplementedError


class CentredKeplerianOrbit(BarycentricSource):
    """Two-body elements around ``center`` ("sun", "moon", "mars"); angles in degrees."""

    kind = "keplerian"

    def __init__(self, center, epoch, semi_major_axis_m, eccentricity, inclination_deg,
                 ra_of_asc_node_deg, arg_of_pericenter_deg, mean_anomaly_deg,
                 reference_plane: str = "icrf_equator"):
        if center not in CENTRES:
            raise PhysicsInputError("center", center, "centre must be 'earth', 'sun', 'moon' or 'mars'")
        gm, radius, term = CENTRES[center]
        a, e = float(semi_major_axis_m), float(eccentricity)
        if not 0.0 <= e < 1.0:
            raise PhysicsInputError(
                "eccentricity", e,
                f"eccentricity {e} is not elliptic (0 <= e < 1): hyperbolic or parabolic elements are "
                f"not a closed orbit around the {center}",
            )
        if a * (1 + e) > MAX_APOAPSIS_M[center]:
            raise PhysicsInputError(
                "semi_major_axis_m", a,
                f"apoapsis radius {a * (1 + e) / 1e3:.4g} km is beyond "
                f"{MAX_APOAPSIS_M[center] / 1e3:.3g} km, where a two-body orbit around the {center} "
                "is not a usable model",
            )
        if a * (1 - e) <= radius:
            raise PhysicsInputError(
                "semi_major_axis_m", a,
                f"pericentre radius {a * (1 - e) / 1e3:.0f} km is inside the {center} "
                f"(radius {radius / 1e3:.0f} km)",
            )
        if reference_plane not in ("icrf_equator", "ecliptic_j2000"):
            raise PhysicsInputError("reference_plane", reference_plane,
                                    "reference_plane must be 'icrf_equator' or 'ecliptic_j2000'")
        self.center, self.gm, self.primary_term = center, gm, term
        self._epoch = epoch
        self.a_m, self.e = a, e
        self.angles = tuple(math.radians(x) for x in (inclination_deg, ra_of_asc_node_deg,
                                                      arg_of_pericenter_deg))
        self.m0 = math.radians(mean_anomaly_deg)
        self.n = math.sqrt(gm / a**3)
        self.rotation = _ecliptic_to_equator() if reference_plane == "ecliptic_j2000" else np.eye(3)
        self.reference_plane = reference_plane

    def epoch(self):
        return self._epoch

    def period_s(self) -> float:
        return 2 * math.pi / self.n

    def states_bcrs(self, span, t_s, solar_system, orientation) -> States:
        t_s = np.asarray(t_s, dtype=float)
        dt = t_s - float(span.seconds_after_start(self._epoch))
        i, raan, argp = self.angles
        r, v, _ = elements_to_state(self.gm, self.a_m, self.e, i, raan, argp, self.m0 + self.n * dt)
        r, v = r @ self.rotation.T, v @ self.rotation.T
        body = "mars" if self.center == "mars" else self.center
        xc = solar_system.position_m(body, t_s)
        vc = solar_system.velocity_m_per_s(body, t_s)
        st = States(xc + r, vc + v, np.zeros(len(t_s), dtype=np.int8), frame="BCRS")
        st.r_dot_v_m2_per_s = np.einsum("ni,ni->n", r, v)
        return st

    def describe(self) -> dict:
        return {"type": self.kind, "center": self.center, "propagation": "two-body around the centre, "
                "centre from DE421", "reference_plane": self.reference_plane, "period_s": self.period_s()}


class BodySurfaceClock(BarycentricSource):
    """A clock fixed on the Moon or Mars (planetocentric coordinates on the mean sphere).

    It has no orbit of its own around a central body, so no user-segment eccentricity correction
    is offered; the host body's orbital term (the Moon around the Earth, Mars around the Sun) is a
    known bounded part removed before the secular fit (``physics.bounded_parts``).
    """

    kind = "surface"
    offers_eccentricity_correction = False

    def __init__(self, center, latitude_deg, longitude_deg, height_m=0.0):
        if center not in _ROTATION:
            raise PhysicsInputError("center", center, "surface clocks are supported on 'earth', "
                                    "'moon' and 'mars'")
        if not -90.0 <= latitude_deg <= 90.0:
            raise PhysicsInputError("latitude_deg", latitude_deg, "latitude must lie in [-90, 90]")
        if not -10_000.0 <= height_m <= 30_000.0:
            raise PhysicsInputError("height_m", height_m, f"height above the {center}'s mean sphere "
                                    "must lie in [-10000, 30000] m")
        self.center = center
        self.latitude_deg, self.longitude_deg, self.height_m = latitude_deg, longitude_deg, height_m
        radius = _RADIUS[center] + height_m
        la, lo = math.radians(latitude_deg), math.radians(longitude_deg)
        self.r_fixed_m = radius * np.array([math.cos(la) * math.cos(lo), math.cos(la) * math.sin(lo),
                                            math.sin(la)])
        # The Moon's dominant periodic term is its orbit around the Earth; Mars's is its own orbit.
        self.primary_term = "earth" if center == "moon" else "sun"

    def period_s(self) -> float:
        return MOON_ANOMALISTIC_MONTH_S if self.center == "moon" else MARS_SIDEREAL_PERIOD_S

    def states_bcrs(self, span, t_s, solar_system, orientation) -> States:
        t_s = np.asarray(t_s, dtype=float)
        rot = body_fixed_to_icrf(self.center, _d_tdb(span, t_s))
        r_rel = rot @ self.r_fixed_m
        pole = rot[:, :, 2]
        v_rel = _ROTATION[self.center] * np.cross(pole, r_rel)
        xc = solar_system.position_m(self.center, t_s)
        vc = solar_system.velocity_m_per_s(self.center, t_s)
        return States(xc + r_rel, vc + v_rel, np.zeros(len(t_s), dtype=np.int8), frame="BCRS")

    def describe(self) -> dict:
        return {"type": self.kind, "center": self.center, "latitude_deg": self.latitude_deg,
                "longitude_deg": self.longitude_deg, "height_m": self.height_m,
                "rotation_model": "IAU WGCCRE (Archinal et al. 2011)"}


class EarthSourceInBcrs(BarycentricSource):
    """An Earth-centred source (GCRS states) carried into the BCRS."""

    primary_term = "earth"

    def __init__(self, source):
        self.source = source
        self.kind = source.kind
        self.is_surface = source.is_surface

    def epoch(self):
        return self.source.epoch()

    def period_s(self):
        return self.source.period_s()

    def states_bcrs(self, span, t_s, solar_system, orientation) -> States:
        st = self.source.states(span, t_s, orientation)
        xe = solar_system.position_m("earth", t_s)
        ve = solar_system.velocity_m_per_s("earth", t_s)
        out = States(xe + st.r_gcrs_m, ve + st.v_gcrs_m_per_s, st.code, st.messages, frame="BCRS")
        out.r_dot_v_m2_per_s = np.einsum("ni,ni->n", st.r_gcrs_m, st.v_gcrs_m_per_s)
        out.r_geocentric_m = st.r_gcrs_m
        return out

    def describe(self) -> dict:
        d = dict(self.source.describe())
        d["carried_to_bcrs"] = "geocentre state from DE421 added (Galilean; Lorentz terms omitted)"
        return d
