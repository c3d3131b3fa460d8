"""Fractional rate of a clock far from the Earth, in the BCRS with TCB as coordinate time.

    dtau/dTCB = 1 - (1/c^2) [ v^2/2 + sum_b GM_b / |x - x_b| ]

(first order; TN36 eq. 10.3 without the O(c^-4) terms, which are ~1e-16 and
are reported as omitted). The Earth's term uses its EGM2008 zonal field near
the Earth (within ``EARTH_ZONAL_RANGE_M``); other bodies are point masses
(planets: system barycentres).

As near the Earth, the integrand is g = y_clock - y_ref, each against TT per
TT second, with TT taken *along the geocentre* (TN36 eq. 10.4 without the
position term v_E . (x - x_E)/c^2; the budget states this convention):

    dTT/dTCB = (1 - L_G) (1 - (v_E^2/2 + U_ext(x_E))/c^2) = 1 + d,
    y_clock,TT = (y_clock,TCB - d)/(1 + d)   (exact; avoids 1 + y cancellation)

The reference scales are conventional: they take every body of DE421 whatever the
gravity switches, which choose only the bodies acting on the clock (TN36 eqs. 10.1-10.4).

References: TT/TAI/GPS (0), TCG (L_G/(1 - L_G)), TCB (-d/(1 + d)), TDB
((-L_B - d)/(1 + d), TN36 eq. 10.1), and ``lunar_surface``: an ideal clock on
the Moon's mean equatorial sphere (radius 1737.4 km), with its rotation speed,
the Moon's self-potential GM_M/R_M (point-mass Moon: lunar J2 on the equator,
3.2e-15, is left out and listed among the omitted terms) and the external
potential at the Moon's centre. The Earth's tide does not average out over the
equator: P2 averages to P2(0) P2(sin beta) ~ 1/4 there, GM_E R_M^2/(4 r^3) ~
5 m^2/s^2 (~5e-17, also left out).
"""

from __future__ import annotations

import numpy as np

from .body_rotation import MOON_ROTATION_RATE_RAD_PER_S
from .bounded_parts import (
    clock_position_value_m2_per_s,
    host_r_dot_v_m2_per_s,
    reference_position_value_m2_per_s,
    reference_r_dot_v_m2_per_s,
    source_centre,
)
from .constants import (
    C2_M2_PER_S2,
    EARTH_EQUATORIAL_RADIUS_M,
    EARTH_J2,
    GM_MOON_M3_PER_S2,
    L_G,
    MOON_MEAN_RADIUS_M,
)
from .potential.earth import earth_potential
from .rate import NodeRates, ground_clock_earth_potential
from .solar_system import GM_M3_PER_S2, PLANETS
from .timescales import rate_between

BCRS_TERM_NAMES = ("velocity", "sun", "earth", "moon", "mars", "planets", "time_scale", "reference")
"""``mars`` is the Mars system (a Mars clock's central body); ``planets`` the other planetary systems."""
BCRS_REFERENCES = ("TT", "TAI", "GPS", "TCG", "TCB", "TDB", "lunar_surface")
EARTH_ZONAL_RANGE_M = 5.0e8
"""Beyond this geocentric distance an Earth-centred clock sees a point-mass Earth (J2 term < 2e-18)."""


def _external_potential(x, ss, t_s, exclude: str, gravity=None) -> np.ndarray:
    """Sum of GM_b/|x - x_b| over the bodies other than ``exclude``, m^2/s^2.

    ``gravity`` chooses the bodies acting on a *clock*; a reference scale passes None and gets every
    body (its definition never depends on the switches: TN36 eqs. 10.1-10.4).
    """
    total = np.zeros(len(x))
    for body in ("sun", "earth", "moon") + PLANETS:
        if body == exclude:
            continue
        if gravity is not None and not {"sun": gravity.sun, "moon": gravity.moon}.get(body, True):
            continue
        total = total + GM_M3_PER_S2[body] / np.linalg.norm(x - ss.position_m(body, t_s), axis=1)
    return total


def geocentre_d(ss, t_s) -> np.ndarray:
    """d = dTT/dTCB - 1 along the geocentre (TN36 eq. 10.4, position term dropped), all bodies."""
    xe = ss.position_m("earth", t_s)
    ve = ss.velocity_m_per_s("earth", t_s)
    u_ext = _external_potential(xe, ss, t_s, "earth")
    w = (0.5 * np.einsum("ni,ni->n", ve, ve) + u_ext) / C2_M2_PER_S2
    return -L_G - w + L_G * w


def lunar_surface_rate_tcb(ss, t_s) -> np.ndarray:
    """dtau/dTCB - 1 of the ``lunar_surface`` reference clock (all bodies, by its definition)."""
    xm = ss.position_m("moon", t_s)
    vm = ss.velocity_m_per_s("moon", t_s)
    v_rot = MOON_ROTATION_RATE_RAD_PER_S * MOON_MEAN_RADIUS_M
    u = GM_MOON_M3_PER_S2 / MOON_MEAN_RADIUS_M + _external_potential(xm, ss, t_s, "moon")
    return -(0.5 * (np.einsum("ni,ni->n", vm, vm) + v_rot**2) + u) / C2_M2_PER_S2


def reference_rate_tt(reference: str, d: np.ndarray, ss, t_s) -> np.ndarray:
    """y_ref = d(reference)/dTT - 1 at the nodes, from the time-scale table (every body: the
    gravity switches never reach a reference's definition).

    The table's position-dependent hops are supplied here: d(TCG)/d(TCB) - 1 along the geocentre,
    from d = dTT/dTCB - 1 (TT = TCG (1 - L_G)), and the lunar reference clock's rate against TCB.
    """
    hops = {"TCG": (d + L_G) / (1.0 - L_G)}
    if reference == "lunar_surface":
        hops["lunar_surface"] = lunar_surface_rate_tcb(ss, t_s)
    return np.broadcast_to(rate_between(reference, "TT", hops), d.shape).astype(float)


def bcrs_integrand_terms(source, reference: str, t_s, gravity, ss, orientation, span) -> NodeRates:
    """Terms of g = y_clock - y_ref (against TT along the geocentre, per TT second).

    Also returns, as values at the nodes, the pieces of the known bounded parts
    (``physics.bounded_parts``): the host body's r.v around its own primary, the clock's and the
    reference's position-term values, and the reference's r.v.
    """
    st = source.states_bcrs(span, t_s, ss, orientation)
    x, v = st.r_m, st.v_m_per_s
    d = geocentre_d(ss, t_s)
    inv = -1.0 / ((1.0 + d) * C2_M2_PER_S2)
    terms = {"velocity": inv * 0.5 * np.einsum("ni,ni->n", v, v)}
    xe = ss.position_m("earth", t_s)
    r_geo = x - xe
    r_geo_norm = np.linalg.norm(r_geo, axis=1)
    inner = getattr(source, "source", None)
    if inner is not None and inner.is_surface:
        # A clock on the Earth: the normal field plus gamma N, as in the GCRS (DESIGN.md).
        mono, rest = ground_clock_earth_potential(inner, len(t_s))
        u_earth = mono + rest
    elif _earth_zonal_applies(source, gravity, r_geo_norm):
        mono, zonal = earth_potential(r_geo, orientation.pole_gcrs(t_s), gravity.earth_zonal_degree,
                                      GM_M3_PER_S2["earth"])
        u_earth = mono + zonal
    else:
        u_earth = GM_M3_PER_S2["earth"] / r_geo_norm
    terms["sun"] = inv * (GM_M3_PER_S2["sun"] / np.linalg.norm(x - ss.position_m("sun", t_s), axis=1)
                          if gravity.sun else 0.0 * d)
    terms["earth"] = inv * u_earth
    terms["moon"] = inv * (GM_M3_PER_S2["moon"] / np.linalg.norm(x - ss.position_m("moon", t_s), axis=1)
                           if gravity.moon else 0.0 * d)
    terms["mars"] = inv * GM_M3_PER_S2["mars"] / np.linalg.norm(x - ss.position_m("mars", t_s), axis=1)
    planets = np.zeros_like(d)
    for body in PLANETS:
        if body != "mars":
            planets = planets + GM_M3_PER_S2[body] / np.linalg.norm(x - ss.position_m(body, t_s), axis=1)
    terms["planets"] = inv * planets
    terms["time_scale"] = -d / (1.0 + d)
    terms["reference"] = -reference_rate_tt(reference, d, ss, t_s)
    rv = st.r_dot_v_m2_per_s if st.r_dot_v_m2_per_s is not None else np.zeros_like(d)
    centre = source_centre(source)
    values = {
        "host_r_dot_v": host_r_dot_v_m2_per_s(centre, ss, t_s),
        "clock_position": clock_position_value_m2_per_s(centre, x, ss, t_s),
        "reference_position": reference_position_value_m2_per_s(reference, ss, t_s),
        "reference_r_dot_v": reference_r_dot_v_m2_per_s(reference, ss, t_s),
    }
    return NodeRates(terms, rv, st.code, st.messages, values=values)


def _earth_zonal_applies(source, gravity, r_geo_norm_m) -> bool:
    """The Earth's zonal field acts on Earth-centred clocks within EARTH_ZONAL_RANGE_M; clocks
    centred on the Moon, Mars or the Sun see a point-mass Earth (J2 at the Moon: ~3e-18)."""
    return (getattr(source, "center", "earth") == "earth" and gravity.earth_zonal_degree >= 2
            and bool(np.all(r_geo_norm_m < EARTH_ZONAL_RANGE_M)))


def bcrs_earth_field(source, gravity, span, ss, orientation) -> str:
    """How the Earth's potential acting on the clock is modelled in this budget (for the model block)."""
    inner = getattr(source, "source", None)
    if inner is not None and inner.is_surface:
        return "GRS80 normal field + gamma*N (ground clock)"
    t = np.linspace(0.0, span.duration_s, 33)
    x = source.states_bcrs(span, t, ss, orientation).r_m
    r = np.linalg.norm(x - ss.position_m("earth", t), axis=1)
    if _earth_zonal_applies(source, gravity, r):
        return f"EGM2008 zonal J2..J{gravity.earth_zonal_degree}"
    j2_size = EARTH_J2 * (EARTH_EQUATORIAL_RADIUS_M / r.min()) ** 2 * GM_M3_PER_S2["earth"] / (
        r.min() * C2_M2_PER_S2)
    return f"point mass (the Earth's J2 term at the clock, {j2_size:.1e}, is left out)"
