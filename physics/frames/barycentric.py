"""The barycentric frame: BCRS positions, TCB coordinate time (first order, TN36 eq. 10.3).

    dtau/dTCB = 1 - (v^2/2 + sum_b GM_b/|x - x_b|)/c^2

For clocks far from the Earth (orbits around the Sun, Moon or Mars; clocks on the Moon or Mars)
and for any clock against TCB, TDB or the lunar reference. TT is taken along the geocentre
(TN36 eq. 10.4 without the position term; ``TT_FAR_FROM_EARTH``). Rate terms
(``physics.rate_bcrs``): velocity, sun, earth, moon, planets, time_scale, reference.
"""

from __future__ import annotations

import numpy as np

from ..bounded_parts import (
    BCRS_VALUE_ROWS,
    CONVENTIONAL_RATE_VS_TT,
    EARTH_MOON_CENTRES,
    HOST_PRIMARY,
    TCB_RATE_VS_TDB_MEAN,
    TT_LIKE_REFERENCES,
    eccentricity_part_s,
    source_centre,
)
from ..constants import (
    C2_M2_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_PLANET_SYSTEMS_M3_PER_S2,
    L_G,
    MARS_J2,
    MARS_MEAN_RADIUS_M,
    MOON_ANOMALISTIC_MONTH_S,
    MOON_J2,
    MOON_MEAN_RADIUS_M,
    SECONDS_PER_DAY,
)
from ..errors import PhysicsInputError
from ..orbits.barycentric import BarycentricSource, EarthSourceInBcrs
from ..rate_bcrs import BCRS_REFERENCES, BCRS_TERM_NAMES, bcrs_earth_field, bcrs_integrand_terms
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


POSITION_BASES = {"earth": "earth", "moon": "earth and moon", "mars": "mars"}
"""Local frames whose coordinate position term is removed, by the clock's centre."""

REFERENCE_FIT_POINTS_PER_DAY = 48
"""Samples per day of the lunar reference's own fit (a grid of its own, not the clock's panels)."""


def _refuse_whole_body_switch_near_earth(gravity) -> None:
    """A clock riding with the Earth keeps the Sun and Moon on in the BCRS.

    In the BCRS a body's switch removes its whole potential at the clock (the Sun's is
    GM_sun/(1 au c^2) = 9.9e-9, the Moon's 1.4e-13), while the reference scale keeps it by
    definition (TT along the geocentre, TDB, TCB). Near the Earth the switch's meaning is the
    GCRS one, the tidal part only; giving the other would shift the rate by up to ~850 us/day.
    """
    for body, on in (("sun", gravity.sun), ("moon", gravity.moon)):
        if not on:
            raise PhysicsInputError(
                f"gravity.{body}", False,
                f"for a clock riding with the Earth the barycentric frame would remove the {body}'s "
                "whole potential from the clock but not from the reference scale (the Sun's is "
                "9.9e-9 in rate): near the Earth only its tidal part can be switched off, in the "
                "GCRS (frame \"GCRS\" with TT, TAI, GPS or TCG); against TCB, TDB or "
                f"lunar_surface keep \"{body}\": true",
            )


class BarycentricFrame(Frame):
    name = "BCRS"
    coordinate_time = "TCB"
    term_names = BCRS_TERM_NAMES
    extra_rows = ("r_dot_v",) + BCRS_VALUE_ROWS

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
        self.centre = source_centre(bsrc)
        if self.centre == "earth":
            _refuse_whole_body_switch_near_earth(gravity)
        self.position_base = POSITION_BASES.get(self.centre, "none")
        self.offers_eccentricity_correction = bool(getattr(bsrc, "offers_eccentricity_correction", True))
        self._y_ref = CONVENTIONAL_RATE_VS_TT.get(reference)

    def evaluate(self, t_s):
        return bcrs_integrand_terms(self.source, self.reference, t_s, self.gravity, self.ss,
                                    self.env.orientation, self.span)

    def _extra(self, nr) -> list:
        return [nr.r_dot_v_m2_per_s] + [nr.values[n] for n in BCRS_VALUE_ROWS]

    def mean_reference_rate(self, term_rates) -> float:
        """The reference's mean rate against TT: defining for the conventional scales, fitted to its
        own offset (known parts removed, on a grid of its own) for ``lunar_surface``."""
        return float(self._y_ref)

    def _values(self, q, names, t_s):
        idx = [self.row_names.index(n) for n in names]
        v = q.values_at(np.atleast_1d(np.asarray(t_s, dtype=float)), rows=idx)
        v0 = q.values_at(np.array([0.0]), rows=idx)[:, 0]
        return {n: v[i] - v0[i] for i, n in enumerate(names)}

    def _cumulative(self, q, name, t_s):
        t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
        return q.cumulative_at(t_s, rows=[self.row_names.index(name)])[0]

    def not_the_clocks_own_s(self, q, t_s):
        """What the offset carries that is not the clock's own periodic part, at ``t_s``, s: the
        coordinate position term, and TDB - TT when a TT-like scale is compared with a clock that
        does not ride with the Earth (the reference's own oscillation, not the clock's)."""
        out = self.position_term_s(q, t_s)
        if self.reference in TT_LIKE_REFERENCES and self.centre not in EARTH_MOON_CENTRES:
            t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
            out = out + self._cumulative(q, "time_scale", t_s) - TCB_RATE_VS_TDB_MEAN * t_s
        return out

    def position_term_s(self, q, t_s):
        """The coordinate position term, clock minus reference, at ``t_s``: -(Delta v_B.(x - x_B))/c^2
        over the clock's local frames, less the lunar reference's centre's own (TN36 eq. 10.4)."""
        v = self._values(q, ("clock_position", "reference_position"), t_s)
        return -(v["clock_position"] - v["reference_position"]) / C2_M2_PER_S2

    def _reference_offset_s(self, q, t_s):
        """The lunar reference's offset against TT less its known parts (the Moon's eccentricity
        term around the Earth and its centre's position term), s."""
        v = self._values(q, ("reference_r_dot_v", "reference_position"), t_s)
        known = eccentricity_part_s(v["reference_r_dot_v"], 0.0) - v["reference_position"] / C2_M2_PER_S2
        return -self._cumulative(q, "reference", t_s) - known

    def _fit_lunar_reference_rate(self, q) -> float:
        from ..budget.fit import fit_line_and_harmonics

        n = max(64, int(np.ceil(self.span.duration_s / SECONDS_PER_DAY * REFERENCE_FIT_POINTS_PER_DAY)) + 1)
        t = np.linspace(0.0, self.span.duration_s, n)
        return fit_line_and_harmonics(t, self._reference_offset_s(q, t), MOON_ANOMALISTIC_MONTH_S)

    def bounded_parts(self, q) -> list:
        """Known bounded parts (physics.bounded_parts), each booked against the terms carrying it:
        the eccentricity term around the clock's own centre; the host body's own term; the position
        term of the clock's local frames; TDB - TT (in the time_scale term; for a clock riding with
        the Earth also, with the opposite sign, in its own velocity and solar potential); and the
        reference's own departure from its defining mean rate."""
        from ..budget.fit import BoundedPart

        if self._y_ref is None:
            self._y_ref = self._fit_lunar_reference_rate(q)
        parts = [self.eccentricity_part(q)]
        if self.centre in HOST_PRIMARY:
            host_term = HOST_PRIMARY[self.centre][1]
            parts.append(self._row_part(q, "host_r_dot_v", -2.0 / ((1.0 - L_G) * C2_M2_PER_S2),
                                        "host_body_eccentricity_term", {"velocity": 0.5, host_term: 0.5}))
        if self.centre != "sun":
            parts.append(self._row_part(q, "clock_position", -1.0 / C2_M2_PER_S2, "position_term",
                                        {"velocity": 1.0}))

        def annual(t_s):
            t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
            return self._cumulative(q, "time_scale", t_s) - TCB_RATE_VS_TDB_MEAN * t_s

        parts.append(BoundedPart("tdb_minus_tt_in_the_time_scale_term", annual, {"time_scale": 1.0}))
        if self.centre in EARTH_MOON_CENTRES:
            parts.append(BoundedPart("geocentre_annual_term_in_the_clock_rate", lambda t: -annual(t),
                                     {"velocity": 0.5, "sun": 0.5}))
        y_ref = self._y_ref

        def reference_part(t_s):
            t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
            return self._cumulative(q, "reference", t_s) + y_ref * t_s

        if self.reference not in ("TT", "TAI", "GPS"):
            parts.append(BoundedPart("reference_periodic_part", reference_part, {"reference": 1.0}))
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
        if isinstance(self.source, EarthSourceInBcrs) and not self.source.is_surface:
            # The Earth's field here is its zonal part at most (rate_bcrs.bcrs_earth_field), as in
            # the GCRS: the tesseral harmonics are left out in both.
            from .geocentric import tesseral_term

            st = self.source.source.states(self.span, np.array([0.0]), self.env.orientation)
            out.append(OmittedTerm(*tesseral_term(float(np.linalg.norm(st.r_gcrs_m[0])))))
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
            "earth_field": bcrs_earth_field(self.source, self.gravity, self.span, self.ss,
                                            self.env.orientation),
            "body_fields": "Sun, Moon and planetary systems as point masses (DE421 GM, TN36 Table 3.1)",
            "tides": "full potentials of the bodies acting on the clock: "
            + ", ".join(["earth", "mars", "other planetary systems"] + list(self.gravity.bodies()))
            + "; the reference scales always include every body (TN36 eqs. 10.1-10.4)",
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

    def signal_path(self, t_s, link_station) -> dict:
        from ..contacts.signal_path import light_time_to_earth

        return light_time_to_earth(self.source, self.span, t_s, self.ss, self.env.orientation, link_station)
