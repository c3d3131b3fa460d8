"""Keplerian elements around the Earth, two-body or with J2 secular drift.

Elements are osculating (two-body) or mean (with ``j2_secular``) elements in
the GCRS at ``epoch``, around the Earth with the TCG-compatible GM (TN36
Table 1.1). With ``j2_secular`` the node, perigee and mean anomaly drift at
the first-order secular rates of Brouwer (1959) (Vallado, 4th ed., eqs.
9-41, 9-42 and 9-39):

    dRAAN/dt = -3/2 n J2 (R/p)^2 cos i
    dargp/dt =  3/4 n J2 (R/p)^2 (5 cos^2 i - 1)
    dM/dt    =  n [1 + 3/4 J2 (R/p)^2 sqrt(1 - e^2) (3 cos^2 i - 1)]

The shape of the orbit stays Keplerian: short-period J2 motion is not
modelled by this source (use a TLE/SGP4 source for that).
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import EARTH_EQUATORIAL_RADIUS_M, EARTH_J2, GM_EARTH_TCG_M3_PER_S2
from ..errors import PhysicsInputError
from ..kepler import elements_to_state
from .base import OrbitSource, States

EARTH_HILL_RADIUS_M = 1.5e9
"""Radius of the Earth's Hill sphere, a (m/3M)^(1/3) ~ 1.5e6 km (common practice)."""

MIN_PERIGEE_ALTITUDE_M = 0.0
"""A perigee below the equatorial radius is refused (the orbit hits the Earth)."""


class KeplerianOrbit(OrbitSource):
    """Earth-centred elements; angles in degrees at the interface, radians inside."""

    kind = "keplerian"

    def __init__(
        self,
        epoch,
        semi_major_axis_m: float,
        eccentricity: float,
        inclination_deg: float,
        ra_of_asc_node_deg: float,
        arg_of_pericenter_deg: float,
        mean_anomaly_deg: float,
        j2_secular: bool = False,
        gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2,
    ):
        a, e = float(semi_major_axis_m), float(eccentricity)
        if not math.isfinite(a) or a <= 0.0:
            raise PhysicsInputError(
                "orbit.semi_major_axis_km", a / 1e3,
                "the semi-major axis must be positive for an elliptic orbit around the Earth",
            )
        if not 0.0 <= e < 1.0:
            raise PhysicsInputError(
                "orbit.eccentricity", e,
                f"eccentricity {e} is not elliptic (0 <= e < 1); hyperbolic or parabolic "
                "elements do not describe a clock bound to the Earth",
            )
        if a * (1.0 + e) > EARTH_HILL_RADIUS_M:
            raise PhysicsInputError(
                "orbit.semi_major_axis_km", a / 1e3,
                f"apogee radius {a * (1 + e) / 1e3:.4g} km is beyond the Earth's Hill sphere "
                f"(~{EARTH_HILL_RADIUS_M / 1e3:.3g} km), where an Earth-centred two-body orbit is not "
                "bound; give the orbit around the Sun (\"center\": \"sun\")",
            )
        rp = a * (1.0 - e)
        if rp <= EARTH_EQUATORIAL_RADIUS_M + MIN_PERIGEE_ALTITUDE_M:
            raise PhysicsInputError(
                "orbit.semi_major_axis_km", a / 1e3,
                f"perigee radius {rp / 1e3:.0f} km is below the Earth's equatorial radius "
                f"{EARTH_EQUATORIAL_RADIUS_M / 1e3:.0f} km",
            )
        if not 0.0 <= inclination_deg <= 180.0:
            raise PhysicsInputError(
                "orbit.inclination_deg", inclination_deg, "inclination must lie in [0, 180] degrees"
            )
        self._epoch = epoch
        self.a_m, self.e = a, e
        self.i_rad = math.radians(inclination_deg)
        self.raan_rad = math.radians(ra_of_asc_node_deg)
        self.argp_rad = math.radians(arg_of_pericenter_deg)
        self.m0_rad = math.radians(mean_anomaly_deg)
        self.gm = gm_m3_per_s2
        self.j2_secular = bool(j2_secular)
        n = math.sqrt(gm_m3_per_s2 / a**3)
        self.mean_motion_rad_per_s = n
        if self.j2_secular:
            p = a * (1 - e * e)
            k = EARTH_J2 * (EARTH_EQUATORIAL_RADIUS_M / p) ** 2
            ci = math.cos(self.i_rad)
            self.raan_rate = -1.5 * n * k * ci
            self.argp_rate = 0.75 * n * k * (5 * ci * ci - 1)
            self.m_rate = n * (1 + 0.75 * k * math.sqrt(1 - e * e) * (3 * ci * ci - 1))
        else:
            self.raan_rate = self.argp_rate = 0.0
            self.m_rate = n

    def epoch(self):
        return self._epoch

    def period_s(self) -> float:
        return 2.0 * math.pi / self.m_rate

    ECCENTRIC_PANELS_FROM_E = 0.3
    """Above this eccentricity the first panels are cut at equal steps of eccentric anomaly."""

    def panel_breaks_s(self, span, per_orbit: int = 8):
        """Panel edges at E = 2 pi k / per_orbit (TT s after the span start) for eccentric orbits.

        Equal steps in eccentric anomaly are short near perigee, where the rate changes fast,
        and long near apogee (t = (E - e sin E)/n, Kepler's equation), so the adaptive
        refinement starts close to its answer. None for near-circular orbits.
        """
        if self.e < self.ECCENTRIC_PANELS_FROM_E:
            return None
        start_dt = -float(span.seconds_after_start(self._epoch))  # start - epoch, s
        m_start = self.m0_rad + self.m_rate * start_dt
        m_end = m_start + self.m_rate * span.duration_s
        k0 = math.floor(m_start / (2 * math.pi)) * per_orbit
        k1 = math.ceil(m_end / (2 * math.pi)) * per_orbit
        ecc_anom = 2 * math.pi * np.arange(k0, k1 + 1) / per_orbit
        mean_anom = ecc_anom - self.e * np.sin(ecc_anom)
        t = (mean_anom - m_start) / self.m_rate
        return t[(t > 0.0) & (t < span.duration_s)]

    def states(self, span, t_s, orientation) -> States:
        t_s = np.asarray(t_s, dtype=float)
        dt = t_s - float(span.seconds_after_start(self._epoch))  # seconds since epoch
        raan = self.raan_rad + self.raan_rate * dt
        argp = self.argp_rad + self.argp_rate * dt
        m = self.m0_rad + self.m_rate * dt
        if not self.j2_secular:
            raan, argp = self.raan_rad, self.argp_rad
        r, v, _ = elements_to_state(self.gm, self.a_m, self.e, self.i_rad, raan, argp, m)
        return States(r, v, np.zeros(len(t_s), dtype=np.int8))

    def describe(self) -> dict:
        return {
            "type": self.kind,
            "propagation": "two-body with J2 secular drift" if self.j2_secular else "two-body",
            "gm_m3_per_s2": self.gm,
            "period_s": self.period_s(),
        }
