"""The barycentric frame: BCRS positions, TCB coordinate time (first order, TN36 eq. 10.3).

    dtau/dTCB = 1 - (v^2/2 + sum_b GM_b/|x - x_b|)/c^2

For clocks far from the Earth (orbits around the Sun, Moon or Mars; clocks on the Moon or Mars)
and for any clock against TCB, TDB or the lunar reference. TT is taken along the geocentre
(TN36 eq. 10.4 without the position term; ``TT_FAR_FROM_EARTH``). Rate terms
(``physics.rate_bcrs``): velocity, sun, earth, moon, planets, time_scale, reference.
"""

from __future__ import annotations

import numpy as np

from ..constants import (
    C2_M2_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_PLANET_SYSTEMS_M3_PER_S2,
    MARS_J2,
    MARS_MEAN_RADIUS_M,
    MOON_J2,
    MOON_MEAN_RADIUS_M,
)
from ..errors import PhysicsInputError
from ..orbits.barycentric import BarycentricSource, EarthSourceInBcrs
from ..rate_bcrs import (
    BCRS_REFERENCES,
    BCRS_TERM_NAMES,
    EARTH_ZONAL_RANGE_M,
    POSITION_TERM_RANGE_M,
    bcrs_integrand_terms,
    position_term_base,
)
from ..solar_system import solar_system_for
from .base import Frame

TT_FAR_FROM_EARTH = (
    "TT is taken along the geocentre: dTT/dTCB = (1 - L_G)(1 - (v_E^2/2 + U_ext(x_E))/c^2) "
    "(IERS Conventions 2010, TN36 eq. 10.4 without the position term v_E.(x - x_E)/c^2)"
)

_SURFACE_J2_TERM = {  # (J2/2) GM/R at the surface, as a fractional rate: sizes an omitted term
    "moon": MOON_J2 * 0.5 * GM_MOON_M3_PER_S2 / MOON_MEAN_RADIUS_M / C2_M2_PER_S2,
    "mars": MARS_J2 * 0.5 * GM_PLANET_SYSTEMS_M3_PER_S2["mars"] / MARS_MEAN_RADIUS_M / C2_M2_PER_S2,
}


class BarycentricFrame(Frame):
    name = "BCRS"
    coordinate_time = "TCB"
    term_names = BCRS_TERM_NAMES
    extra_rows = ("r_dot_v", "ve_dot_r")

    def __init__(self, source, reference, gravity, span, env):
        if not isinstance(reference, str) or reference not in BCRS_REFERENCES:
            raise PhysicsInputError(
                "reference", None if not isinstance(reference, str) else reference,
                "a barycentric (BCRS) budget takes the references TT, TAI, GPS, TCG, TCB, TDB or "
                "lunar_surface; a ground reference clock is only available near the Earth (GCRS)",
            )
        bsrc = source if isinstance(source, BarycentricSource) else EarthSourceInBcrs(source)
        super().__init__(bsrc, reference, gravity, span, env)
        self.ss = solar_system_for(span)
        self.primary_term = bsrc.primary_term
        self.position_base = position_term_base(reference)

    def evaluate(self, t_s):
        return bcrs_integrand_terms(self.source, self.reference, t_s, self.gravity, self.ss,
                                    self.env.orientation, self.span)

    def _extra(self, nr) -> list:
        return [nr.r_dot_v_m2_per_s, nr.v_earth_dot_r_m2_per_s]

    def mean_reference_rate(self, term_rates) -> float:
        return -term_rates["reference"]

    def near_position_base(self) -> bool:
        """Whether the clock stays within POSITION_TERM_RANGE_M of the position term's base body."""
        t = np.linspace(0.0, self.span.duration_s, 33)
        x = self.source.states_bcrs(self.span, t, self.ss, self.env.orientation).r_m
        d = np.linalg.norm(x - self.ss.position_m(self.position_base, t), axis=1)
        return bool(np.max(d) < POSITION_TERM_RANGE_M)

    def position_part(self, q):
        """-(v_B.(x - x_B) - its start value)/c^2, booked against the velocity term."""
        return self._row_part(q, "ve_dot_r", -1.0 / C2_M2_PER_S2, "position_term", {"velocity": 1.0})

    def bounded_parts(self, q) -> list:
        """The eccentricity term, and near the Earth or the Moon the position term (TN36 eq. 10.4):
        its ~130 us monthly swing for a lunar clock, modulated by the annual turn of v_E, would
        otherwise leak ~0.1 us/day into a few months' rate."""
        parts = [self.eccentricity_part(q)]
        if self.near_position_base():
            parts.append(self.position_part(q))
        return parts

    def omitted_terms(self) -> tuple:
        from ..budget.result import OmittedTerm  # (the budget package imports the frames)

        out = [
            OmittedTerm("post_newtonian_c4", 1e-16,
                        "O(c^-4) terms of the BCRS metric: (U/c^2)^2 ~ 1e-16 at 1 au (TN36 section 10.1)"),
            OmittedTerm("asteroids_and_minor_bodies", 1e-17,
                        "not in the potential sum; TN36 attributes ~1.15e-16 of L_C to c^-4 terms and "
                        "asteroids"),
            OmittedTerm("planetary_oblateness_and_satellites", 1e-18,
                        "planets are point masses at their system barycentres"),
        ]
        center = getattr(self.source, "center", None)
        if center == "moon":
            out.append(OmittedTerm("moon_zonal_harmonics", _SURFACE_J2_TERM["moon"],
                                   f"lunar J2 = {MOON_J2:g} (common practice) at the surface; point-mass "
                                   "Moon used"))
        if center == "mars":
            out.append(OmittedTerm("mars_zonal_harmonics", _SURFACE_J2_TERM["mars"],
                                   f"Mars J2 = {MARS_J2:g} (common practice) at the surface; point-mass "
                                   "Mars used"))
        if self.reference == "lunar_surface":
            # The reference clock sits on a point-mass Moon's mean equatorial sphere. Its J2 term
            # there is +(J2/2) GM_M/R_M (P2(0) = -1/2); the Earth's tide averaged over the equator
            # is GM_E R_M^2/(4 r^3) ~ 5 m^2/s^2 (P2 averages to P2(0) P2(sin beta) ~ 1/4), ~5e-17.
            out.append(OmittedTerm(
                "lunar_surface_reference_moon_zonal_harmonics", _SURFACE_J2_TERM["moon"],
                f"the lunar_surface reference uses a point-mass Moon: lunar J2 = {MOON_J2:g} (common "
                "practice) on its equator is left out; the Earth's tide averaged over the lunar "
                "equator (~5e-17) is left out too"))
        if isinstance(self.source, EarthSourceInBcrs):
            out.append(OmittedTerm("gcrs_to_bcrs_lorentz_terms", 1e-16,
                                   "the geocentric state is added to the geocentre's without the O(c^-2) "
                                   "Lorentz terms of the transformation"))
        return tuple(out)

    def describe(self, included_terms) -> dict:
        return {
            "frame": "BCRS",
            "coordinate_time": "TCB",
            "rate_equation": "dtau/dTCB = 1 - (v^2/2 + sum_b GM_b/|x - x_b|)/c^2 (first order, "
            "TN36 eq. 10.3); TDB = TCB - L_B (TCB - T0) + TDB0 (TN36 eq. 10.1)",
            "included_terms": list(included_terms),
            "earth_field": self._earth_field(),
            "tides": "full potentials of the Sun, Moon and planets (system barycentres), DE421",
            "ephemeris": "JPL DE421 (skyfield-data), coarse grid + cubic spline",
            "orbit": self.source.describe(),
            "tt_convention": TT_FAR_FROM_EARTH,
            **self._central_body_field(),
        }

    def _central_body_field(self) -> dict:
        center = getattr(self.source, "center", "earth")
        if center in ("moon", "mars"):
            return {"central_body_field": f"point-mass {center.capitalize()} (its J2 is listed among "
                    "the omitted terms)"}
        return {}

    def _earth_field(self) -> str:
        if getattr(self.source, "is_surface", False):
            return "GRS80 normal field + gamma*N (ground clock)"
        if self.gravity.earth_zonal_degree == 0:
            return "point mass"
        return (f"EGM2008 zonal J2..J{self.gravity.earth_zonal_degree} within "
                f"{EARTH_ZONAL_RANGE_M / 1e3:.0f} km of the geocentre, a point mass beyond")

    def signal_path(self, t_s, link_station) -> dict:
        from ..contacts.signal_path import light_time_to_earth

        return light_time_to_earth(self.source, self.span, t_s, self.ss, self.env.orientation, link_station)
