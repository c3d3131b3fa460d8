"""Keplerian elements around the Earth, in the same zonal field the budget evaluates.

Elements are given in the GCRS at ``epoch``, around the Earth with the
TCG-compatible GM (TN36 Table 1.1). ``zonal_degree`` is the Earth field the
budget evaluates along the orbit (0, or 2..6 for EGM2008 J2..Jn):

- degree 0: a two-body ellipse (both element types are the same thing);
- degree >= 2, ``element_type="osculating"``: the state at the epoch is the
  two-body conversion of the elements; the orbit then follows the field;
- degree >= 2, ``element_type="mean"``: the elements are Brouwer mean elements
  of the first-order J2 theory of ``zonal_theory`` (short-period terms included).

With degree >= 2 the trajectory is that first-order theory (``zonal_theory``),
worked in the frame of the Earth's true equator at the epoch (the field's axis,
0.15 deg from the GCRS pole in 2027), and made energy-consistent with the
whole zonal field (``zonal_energy``): the speed at every node is
sqrt(2 (E + U(x))) with U the field of the budget, and the mean semi-major axis
satisfies the orbit-averaged virial identity for that energy. E is the energy of
the osculating state (osculating elements) or the virial energy of the mean
orbit (mean elements). The clock's mean rate is then exact to O(J2^3); the
theory's second-order errors (metres radially, km per day along-track in LEO)
remain in the position; J3 adds its long-period eccentricity term; the J3..J6
short-period terms, the Sun and the Moon act on the clock's rate and on E but not on
the orbit's shape.

``j2_secular`` (kept for callers of the earlier interface) drifts the node,
perigee and mean anomaly of a two-body ellipse at Brouwer's secular rates
(Vallado, 4th ed., eqs. 9-39 to 9-42) when ``zonal_degree`` is 0; with a zonal
field it means mean elements.
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import (
    AU_M,
    C2_M2_PER_S2,
    EARTH_EQUATORIAL_RADIUS_M,
    EARTH_J2,
    EGM2008_J,
    EGM2008_REFERENCE_RADIUS_M,
    GM_EARTH_TCG_M3_PER_S2,
    L_G,
    MAX_ZONAL_DEGREE,
    MEAN_MOON_DISTANCE_M,
)
from ..errors import PhysicsInputError
from ..kepler import elements_to_state
from ..potential.tidal import BODY_GM_M3_PER_S2
from . import zonal_energy, zonal_theory
from .base import OrbitSource, States, check_perigee_altitude

ELEMENT_TYPES = ("osculating", "mean")
THEORY_NAME = "Brouwer (1959) first-order J2 theory, short-period terms in polar-nodal variables"

EARTH_HILL_RADIUS_M = 1.5e9
"""Radius of the Earth's Hill sphere, a (m/3M)^(1/3) ~ 1.5e6 km (common practice)."""


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
        element_type: str = "osculating",
        zonal_degree: int = 0,
    ):
        a, e = float(semi_major_axis_m), float(eccentricity)
        if not math.isfinite(a) or a <= 0.0:
            raise PhysicsInputError(
                "semi_major_axis_m", a,
                "the semi-major axis must be positive for an elliptic orbit around the Earth",
            )
        if not 0.0 <= e < 1.0:
            raise PhysicsInputError(
                "eccentricity", e,
                f"eccentricity {e} is not elliptic (0 <= e < 1); hyperbolic or parabolic "
                "elements do not describe a clock bound to the Earth",
            )
        if a * (1.0 + e) > EARTH_HILL_RADIUS_M:
            raise PhysicsInputError(
                "semi_major_axis_m", a,
                f"apogee radius {a * (1 + e) / 1e3:.4g} km is beyond the Earth's Hill sphere "
                f"(~{EARTH_HILL_RADIUS_M / 1e3:.3g} km), where an Earth-centred two-body orbit is not "
                "bound; give the orbit around the Sun (\"center\": \"sun\")",
            )
        rp = a * (1.0 - e)
        if rp <= EARTH_EQUATORIAL_RADIUS_M:
            raise PhysicsInputError(
                "semi_major_axis_m", a,
                f"perigee radius {rp / 1e3:.0f} km is below the Earth's equatorial radius "
                f"{EARTH_EQUATORIAL_RADIUS_M / 1e3:.0f} km",
            )
        check_perigee_altitude(rp, "semi_major_axis_m", a)
        if not 0.0 <= inclination_deg <= 180.0:
            raise PhysicsInputError(
                "inclination_deg", inclination_deg, "inclination must lie in [0, 180] degrees"
            )
        if element_type not in ELEMENT_TYPES:
            raise PhysicsInputError("element_type", element_type,
                                    f"element type must be one of {', '.join(ELEMENT_TYPES)}")
        if zonal_degree < 0 or zonal_degree == 1 or zonal_degree > MAX_ZONAL_DEGREE:
            raise PhysicsInputError("zonal_degree", zonal_degree,
                                    f"zonal degree must be 0 or 2..{MAX_ZONAL_DEGREE}")
        self._epoch = epoch
        self.a_m, self.e = a, e
        self.i_rad = math.radians(inclination_deg)
        self.raan_rad = math.radians(ra_of_asc_node_deg)
        self.argp_rad = math.radians(arg_of_pericenter_deg)
        self.m0_rad = math.radians(mean_anomaly_deg)
        self.gm = gm_m3_per_s2
        self.element_type = element_type
        self.zonal_degree = int(zonal_degree)
        self.input_a_m, self.input_e = a, e
        self.j2_secular = bool(j2_secular) and self.zonal_degree < 2
        self._theory = None
        if self.zonal_degree >= 2:
            self._init_theory()
            return
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

    def _init_theory(self):
        """Mean elements in the true-equator frame of the epoch, and the orbit's energy."""
        field = zonal_theory.J2Field(self.gm, EGM2008_J[2], EGM2008_REFERENCE_RADIUS_M,
                                     EGM2008_J[3] if self.zonal_degree >= 3 else 0.0)
        rot = np.asarray(self._epoch.M, dtype=float)  # GCRS -> true equator of the epoch
        r0, v0, _ = elements_to_state(self.gm, self.a_m, self.e, self.i_rad, self.raan_rad,
                                      self.argp_rad, self.m0_rad)
        r0, v0 = rot @ r0[0], rot @ v0[0]
        if self.element_type == "osculating":
            el = zonal_theory.mean_from_osculating(r0, v0, field)
            u0 = float(zonal_energy.potential_pole_frame(r0[None], self.zonal_degree, self.gm)[0])
            energy = 0.5 * float(v0 @ v0) - u0
            el = zonal_energy.calibrate_semi_major_axis(el, field, self.zonal_degree, energy)
        else:
            # Mean elements referred to the GCRS equator, re-expressed about the field's axis.
            el = zonal_theory.two_body_elements(r0, v0, self.gm)
            energy = zonal_energy.virial_energy(el, field, self.zonal_degree)
        self._theory = (field, el, rot, energy)
        self.mean_elements = el
        self.energy_m2_per_s2 = energy
        self.a_m, self.e = el.a_m, el.e
        self.raan_rate, self.argp_rate, self.m_rate = zonal_theory.secular_rates(el, field)
        # Convert to rates per TT second (the budget's time argument); TCG runs 1/(1 - L_G) faster.
        scale = 1.0 / (1.0 - L_G)
        self.raan_rate, self.argp_rate, self.m_rate = (x * scale for x in
                                                       (self.raan_rate, self.argp_rate, self.m_rate))
        self.m0_rad = el.m_rad
        self.mean_motion_rad_per_s = math.sqrt(self.gm / el.a_m**3) * scale

    def epoch(self):
        return self._epoch

    def period_s(self) -> float:
        """Anomalistic period; with a zonal field and e < 0.3 the draconic (nodal) period, whose
        harmonics carry the J2 terms of a near-circular orbit's rate."""
        if self._theory is not None and self.e < self.ECCENTRIC_PANELS_FROM_E:
            return 2.0 * math.pi / (self.m_rate + self.argp_rate)
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
        if self._theory is not None:
            return self._theory_states(t_s, dt, orientation)
        raan = self.raan_rad + self.raan_rate * dt
        argp = self.argp_rad + self.argp_rate * dt
        m = self.m0_rad + self.m_rate * dt
        if not self.j2_secular:
            raan, argp = self.raan_rad, self.argp_rad
        r, v, _ = elements_to_state(self.gm, self.a_m, self.e, self.i_rad, raan, argp, m)
        return States(r, v, np.zeros(len(t_s), dtype=np.int8))

    def _theory_states(self, t_s, dt_tt_s, orientation) -> States:
        field, el, rot, energy = self._theory
        pos, vel = zonal_theory.osculating_state(el, field, dt_tt_s / (1.0 - L_G))
        r_gcrs, v_gcrs = pos @ rot, vel @ rot  # rot.T @ x for each row
        # The speed comes from the energy and the field the budget evaluates, pole included.
        if orientation is not None and len(t_s):
            pole = orientation.pole_gcrs(t_s)
            rn = np.linalg.norm(r_gcrs, axis=1)
            u0, un = zonal_energy.zonal_terms(rn, np.einsum("ni,ni->n", r_gcrs, pole) / rn,
                                              self.zonal_degree, self.gm)
            u = u0 + sum(un)
        else:
            u = zonal_energy.potential_pole_frame(pos, self.zonal_degree, self.gm)
        v_gcrs = zonal_energy.energy_consistent_velocity(v_gcrs, u, energy)
        return States(r_gcrs, v_gcrs, np.zeros(len(t_s), dtype=np.int8))

    def omitted_motion_terms(self, gravity, mean_r_m: float) -> list[tuple[str, float, str]]:
        """(name, fractional size, note) of the forces the budget's field or switches have but
        this orbit's motion leaves out."""
        gm_over_rc2 = self.gm / (mean_r_m * C2_M2_PER_S2)
        ratio = EGM2008_REFERENCE_RADIUS_M / mean_r_m
        if self._theory is None:
            if gravity.earth_zonal_degree < 2:
                return []
            return [("orbit_perturbations_zonal", EARTH_J2 * ratio**2 * gm_over_rc2,
                     "this orbit moves in a point-mass field while the rate evaluates the zonal "
                     "terms; order of the J2 rate terms that belong to no trajectory")]
        out = [("orbit_shape_beyond_first_order_j2",
                max(EARTH_J2**2 * ratio**4, abs(EGM2008_J[3]) * ratio**3) * gm_over_rc2,
                "J2^2 and the J3..Jn short-period terms of the orbit's shape, left out by the "
                "first-order theory; periodic (the energy consistency keeps them out of the mean "
                "rate); order of size")]
        distances = {"sun": AU_M, "moon": MEAN_MOON_DISTANCE_M}
        if gravity.bodies():
            size = sum(BODY_GM_M3_PER_S2[b] * mean_r_m**2 / distances[b] ** 3 for b in gravity.bodies())
            out.append(("third_body_forces_on_orbit", size / C2_M2_PER_S2,
                        "the Sun and Moon act on the clock's rate but do not perturb this orbit; order "
                        "of their tidal potential (a state_vector orbit integrates them)"))
        return out

    def describe(self) -> dict:
        out = {
            "type": self.kind,
            "propagation": "two-body with J2 secular drift" if self.j2_secular else "two-body",
            "element_type": self.element_type,
            "gm_m3_per_s2": self.gm,
            "period_s": self.period_s(),
        }
        if self._theory is not None:
            el = self.mean_elements
            given = ("osculating elements converted to the theory's mean elements at the epoch"
                     if self.element_type == "osculating" else "the theory's mean elements")
            out["propagation"] = (
                f"{THEORY_NAME} ({given}), in the true equator of the epoch; speed from the energy "
                f"v^2/2 - U conserved in the EGM2008 zonal field J2..J{self.zonal_degree} that the "
                "rate uses, mean semi-major axis from the orbit-averaged virial identity"
                + ("; J3 long-period eccentricity term" if self.zonal_degree >= 3 else "")
                + "; J3..Jn short-period terms, the Sun and the Moon do not shape the orbit"
            )
            out["element_theory"] = THEORY_NAME
            out["mean_semi_major_axis_m"] = el.a_m
            out["mean_eccentricity"] = el.e
            out["mean_inclination_to_true_equator_deg"] = math.degrees(el.i_rad)
        return out
