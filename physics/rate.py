"""Fractional rate of a clock against a reference time scale, term by term.

Near the Earth, in the GCRS with TCG as coordinate time (TN36 eq. 10.6):

    dtau/dTCG = 1 - (1/c^2) [ v^2/2 + U_E(x) + U_tid(x) ]

and against TT (and TAI, GPS time, which run at TT's rate),
dtau/dTT = (dtau/dTCG) / (1 - L_G) (TN36 eq. 10.2; L_G defining).

The integrand handed to the quadrature is g = y_clock - y_ref, both taken
against TT per TT second, so that the integral over TT seconds is exactly
clock minus reference (offset = clock - reference; positive: the clock gains):

- reference TT, TAI, GPS: y_ref = 0;
- reference TCG: y_ref = dTCG/dTT - 1 = L_G / (1 - L_G);
- reference a ground clock: y_ref is that clock's own rate against TT.

Terms (each an array; they add up to g):
``velocity`` -v^2/(2 c^2 (1-L_G)), ``monopole`` -GM/(r c^2 (1-L_G)),
``zonal`` (Earth's J_n or, for ground clocks, the normal field minus GM/r plus
gamma N), ``tidal`` (Sun + Moon), ``reference_scale`` L_G/(1-L_G) for
references that run at TT's rate, and ``reference_clock`` -y_ref for a ground
reference clock.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, GRS80_GM_M3_PER_S2, L_G
from .potential.earth import earth_potential
from .potential.normal import normal_gravitational_potential, normal_gravity_on_ellipsoid
from .potential.tidal import BODY_GM_M3_PER_S2, tidal_potential
from .timescales import rate_between

TERM_NAMES = ("velocity", "monopole", "zonal", "tidal", "reference_scale", "reference_clock")

_INV_1_MINUS_LG = 1.0 / (1.0 - L_G)
TCG_RATE_AGAINST_TT = L_G * _INV_1_MINUS_LG
"""dTCG/dTT - 1, dimensionless (TN36 eq. 10.2)."""


@dataclass(frozen=True)
class GravityModel:
    """Which potential terms enter the rate."""

    earth_zonal_degree: int = 4
    sun: bool = True
    moon: bool = True

    def bodies(self) -> tuple[str, ...]:
        return tuple(b for b, on in (("sun", self.sun), ("moon", self.moon)) if on)


@dataclass
class NodeRates:
    """Per-node rate terms against TT (dimensionless), plus r.v for the eccentricity term."""

    terms: dict[str, np.ndarray]
    r_dot_v_m2_per_s: np.ndarray
    code: np.ndarray
    messages: dict[int, str]
    values: dict[str, np.ndarray] | None = None  # BCRS: node values of the known bounded parts

    @property
    def total(self) -> np.ndarray:
        return sum(self.terms.values())


def ground_clock_earth_potential(source, n: int):
    """Earth's potential at a clock fixed on the Earth: (u_monopole, u_rest), m^2/s^2, each (n,).

    GRS80 normal field at the clock's ITRS position plus the disturbing potential gamma N on the
    geoid (Bruns); ``u_rest`` is everything but GM/r. Used in both the GCRS and the BCRS.
    """
    rn = float(np.linalg.norm(source.r_itrs_m))
    u_mono = GRS80_GM_M3_PER_S2 / rn
    u_normal = float(normal_gravitational_potential(source.r_itrs_m)[0])
    disturbing = normal_gravity_on_ellipsoid(source.geodetic_lat_rad) * (source.geoid_undulation_m or 0.0)
    return np.full(n, u_mono), np.full(n, u_normal - u_mono + disturbing)


def clock_terms_vs_tt(source, t_s: np.ndarray, gravity: GravityModel, env) -> NodeRates:
    """Rate terms of the clock ``source`` against TT at node times ``t_s``."""
    states = source.states(env.span, t_s, env.orientation)
    r, v = states.r_gcrs_m, states.v_gcrs_m_per_s
    v2 = np.einsum("ni,ni->n", v, v)
    scale = -_INV_1_MINUS_LG / C2_M2_PER_S2
    if source.is_surface:
        u_mono, u_zonal = ground_clock_earth_potential(source, len(t_s))
    else:
        pole = None
        if gravity.earth_zonal_degree >= 2 and states.sin_lat is None:
            pole = env.orientation.pole_gcrs(t_s)
        u_mono, u_zonal = earth_potential(
            r, pole, gravity.earth_zonal_degree, GM_EARTH_TCG_M3_PER_S2, sin_lat=states.sin_lat
        )
    u_tid = np.zeros_like(v2)
    for body in gravity.bodies():
        u_tid = u_tid + tidal_potential(
            r, env.sun_moon.position_m(body, t_s), BODY_GM_M3_PER_S2[body]
        )
    terms = {
        "velocity": scale * 0.5 * v2,
        "monopole": scale * u_mono,
        "zonal": scale * u_zonal,
        "tidal": scale * u_tid,
    }
    r_dot_v = np.einsum("ni,ni->n", r, v)
    return NodeRates(terms, r_dot_v, states.code, states.messages)


def integrand_terms(source, reference, t_s, gravity: GravityModel, env) -> NodeRates:
    """Terms of g = y_clock - y_ref (against TT per TT second) for any reference.

    ``reference``: "TT", "TAI", "GPS", "TCG", or an orbit source with
    ``is_surface`` (a ground clock; its rate uses the same gravity switches
    for the tides).
    """
    clock = clock_terms_vs_tt(source, t_s, gravity, env)
    n = len(t_s)
    if isinstance(reference, str):
        # The clock's terms are per TCG second scaled to TT; the reference scale's own rate against
        # TCG comes from the time-scale table (TT, TAI, GPS: -L_G; TCG: 0).
        y_ref_vs_tcg = rate_between(reference, "TCG")
        clock.terms["reference_scale"] = np.full(n, -y_ref_vs_tcg * _INV_1_MINUS_LG)
        clock.terms["reference_clock"] = np.zeros(n)
    else:
        ref = clock_terms_vs_tt(reference, t_s, gravity, env)
        clock.terms["reference_scale"] = np.full(n, TCG_RATE_AGAINST_TT)
        y_ref = ref.total + TCG_RATE_AGAINST_TT
        clock.terms["reference_clock"] = -y_ref
    return clock
