"""The geocentric frame: GCRS positions, TCG coordinate time (IERS Conventions 2010, TN36 eq. 10.6).

    dtau/dTCG = 1 - (v^2/2 + U_E + U_tid)/c^2,   dTT/dTCG = 1 - L_G

For clocks that stay near the Earth, against TT, TAI, GPS, TCG or a clock on the Earth's surface.
The rate terms (``physics.rate``): velocity, monopole, zonal, tidal, reference_scale,
reference_clock.
"""

from __future__ import annotations

import numpy as np

from ..constants import (
    AU_M,
    C2_M2_PER_S2,
    EARTH_EQUATORIAL_RADIUS_M,
    EGM2008_C22_S22_NORMALIZED,
    GEOID_UNDULATION_MAX_M,
    GM_EARTH_TCG_M3_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_PLANET_SYSTEMS_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    GRS80_U0_M2_PER_S2,
    MAX_ZONAL_DEGREE,
    MEAN_MOON_DISTANCE_M,
    NOMINAL_GRAVITY_M_PER_S2,
    VENUS_CLOSEST_DISTANCE_M,
    W0_M2_PER_S2,
)
from ..potential.earth import omitted_zonal_size
from ..rate import TERM_NAMES, integrand_terms
from .base import Frame


def tesseral_term(r_m: float) -> tuple[str, float, str]:
    """(name, size, note) of the Earth's tesseral and sectoral harmonics at radius ``r_m``, which no
    frame models: the degree-2 sectoral term, the largest."""
    gm_over_rc2 = GM_EARTH_TCG_M3_PER_S2 / (r_m * C2_M2_PER_S2)
    return ("earth_tesseral_and_sectoral_harmonics",
            EGM2008_C22_S22_NORMALIZED * np.sqrt(5.0) * (EARTH_EQUATORIAL_RADIUS_M / r_m) ** 2 * gm_over_rc2,
            "degree-2 sectoral term, EGM2008 C22/S22 (Pavlis et al. 2012 coefficient file); mostly periodic")


class GeocentricFrame(Frame):
    name = "GCRS"
    coordinate_time = "TCG"
    term_names = TERM_NAMES
    primary_term = "monopole"

    def evaluate(self, t_s):
        return integrand_terms(self.source, self.reference, t_s, self.gravity, self.env)

    def mean_reference_rate(self, term_rates) -> float:
        """The reference's mean rate against TT: the scale's from the table, or a ground clock's."""
        if isinstance(self.reference, str):
            from ..timescales import rate_between

            return float(rate_between(self.reference, "TT"))
        return -term_rates["reference_clock"]

    def mean_radius_m(self) -> float:
        if self.source.kind == "keplerian":
            return float(self.source.a_m)
        states0 = self.source.states(self.span, np.array([0.0]), self.env.orientation)
        return float(np.linalg.norm(states0.r_gcrs_m[0]))

    def omitted_terms(self) -> tuple:
        from ..budget.result import OmittedTerm  # (the budget package imports the frames)

        src, grav = self.source, self.gravity
        r = self.mean_radius_m()
        gm_over_rc2 = GM_EARTH_TCG_M3_PER_S2 / (r * C2_M2_PER_S2)
        out = []
        if not src.is_surface:
            if grav.earth_zonal_degree < MAX_ZONAL_DEGREE:
                out.append(OmittedTerm(
                    f"earth_zonal_above_degree_{grav.earth_zonal_degree}",
                    omitted_zonal_size(r, grav.earth_zonal_degree) / C2_M2_PER_S2,
                    "first omitted zonal harmonic at the mean radius (EGM2008)"))
            out.append(OmittedTerm(*tesseral_term(r)))
            if src.kind == "keplerian":
                out.extend(OmittedTerm(*term) for term in src.omitted_motion_terms(grav, r))
        else:
            out.append(OmittedTerm(
                "solid_earth_tides_and_loading", 3e-17,
                "station height changes of ~0.3 m times g/c^2 (common practice); periodic"))
            out.append(OmittedTerm(
                "geoid_potential_convention", (GRS80_U0_M2_PER_S2 - W0_M2_PER_S2) / C2_M2_PER_S2,
                "the geoid is the GRS80 normal field's level surface U0 = 62 636 860.850 m^2/s^2 "
                "(Moritz 2000); TT's rate is defined by W0 = 62 636 856.0 m^2/s^2 (IERS TN36 Table 1.1): "
                "a clock on this geoid reads about -(U0 - W0)/c^2 against TT, some 0.5 m of height; "
                "systematic, not periodic"))
            if src.geoid_undulation_m is None:
                out.append(OmittedTerm(
                    "geoid_undulation", GEOID_UNDULATION_MAX_M * NOMINAL_GRAVITY_M_PER_S2 / C2_M2_PER_S2,
                    "no geoid_undulation_m or orthometric_height_m given: N = 0 assumed; the geoid "
                    "departs from the ellipsoid by up to ~107 m"))
        for body, on, gm, d in (("moon", grav.moon, GM_MOON_M3_PER_S2, MEAN_MOON_DISTANCE_M),
                                ("sun", grav.sun, GM_SUN_M3_PER_S2, AU_M)):
            if not on:
                out.append(OmittedTerm(f"{body}_tide", gm * r**2 / d**3 / C2_M2_PER_S2,
                                       f"tidal potential of the {body} switched off (TN36 eq. 10.6)"))
        out.append(OmittedTerm("planetary_tides",
                               GM_PLANET_SYSTEMS_M3_PER_S2["venus"] * r**2
                               / VENUS_CLOSEST_DISTANCE_M**3 / C2_M2_PER_S2,
                               "Venus at its closest, the largest planetary tide"))
        out.append(OmittedTerm("post_newtonian_c4", gm_over_rc2**2,
                               "O(c^-4) terms of the metric (TN36 section 10.1)"))
        out.append(OmittedTerm("polar_motion", 1e-19,
                               "omitted from the Earth orientation (builtin timescale carries none)"))
        return tuple(out)

    def describe(self, included_terms) -> dict:
        src, grav = self.source, self.gravity
        return {
            "frame": "GCRS",
            "coordinate_time": "TCG",
            "rate_equation": "dtau/dTCG = 1 - (v^2/2 + U_E + U_tid)/c^2 (IERS Conventions 2010, "
            "TN36 eq. 10.6); dTT/dTCG = 1 - L_G",
            "included_terms": list(included_terms),
            "earth_field": "GRS80 normal field + gamma*N (ground clock)" if src.is_surface
            else ("point mass" if grav.earth_zonal_degree == 0
                  else f"EGM2008 zonal J2..J{grav.earth_zonal_degree}"),
            "tides": list(grav.bodies()),
            "ephemeris": "JPL DE421 (skyfield-data), coarse grid + cubic spline",
            "orbit": src.describe(),
        }
