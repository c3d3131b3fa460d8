"""First-order J2 element theory: mean elements -> osculating state, and back.

The theory is Brouwer's (1959, AJ 64:378) first-order solution for J2: mean
elements drift at the secular rates (Vallado, "Fundamentals of Astrodynamics and
Applications", 4th ed., eqs. 9-39 to 9-42)

    dRAAN/dt = -3/2 n J2 (R/p)^2 cos i
    dargp/dt =  3/4 n J2 (R/p)^2 (5 cos^2 i - 1)
    dM/dt    =  n [1 + 3/4 J2 (R/p)^2 sqrt(1 - e^2) (3 cos^2 i - 1)]

with n = sqrt(GM/a^3) of the mean semi-major axis, and the short-period
corrections are added in polar-nodal (Hill) variables r, u, RAAN, r_dot, p, i,
where they stay regular at e = 0 and i = 0 (Brouwer's periodic corrections in
polar-nodal variables: Lara 2014, "Efficient formulation of the periodic
corrections in Brouwer's gravity solution", arXiv:1407.8076; SGP4 uses the same
set in its e -> 0 form, Hoots & Roehrich 1980, Spacetrack Report No. 3). The
expressions below are written from the theory and checked term by term against
a numerical integration of the J2 field in the tests (a wrong term shows as a
km-level error). With q = J2 (R/p)^2, f the true anomaly,
u = f + argp, phi = f - M (the equation of centre), s = sin i, c = cos i,
eta = sqrt(1 - e^2):

    dr     = -q p/4 [(3c^2 - 1)(2 eta/(1 + e cos f) + e cos f/(1 + eta) + 1) - s^2 cos 2u]
    dr_dot =  q sqrt(GM/p)/4 [(3c^2 - 1)/(1 + eta) e sin f (eta (1 + eta) + (1 + e cos f)^2)
                              - 2 s^2 (1 + e cos f)^2 sin 2u]
    du     = -q/8 [6 (1 - 5c^2) phi + 4 e sin f (1 - 6c^2 - (3c^2 - 1)/(1 + eta))
                   - (3c^2 - 1)/(1 + eta) e^2 sin 2f + 2 (5c^2 - 2) e sin(f + 2 argp)
                   + (7c^2 - 1) sin 2u + 2 c^2 e sin(3f + 2 argp)]
    dRAAN  = -3/2 q c [phi + e sin f - 1/2 sin 2u - e/2 sin(f + 2 argp) - e/6 sin(3f + 2 argp)]
    di     =  3/4 q s c [cos 2u + e cos(f + 2 argp) + e/3 cos(3f + 2 argp)]
    dp     =  2 p tan(i) di      (H = sqrt(GM p) cos i has no short-period part)

Tests check the result against a numerical integration of the same J2 field
(the difference is second order, J2^2) and the closed forms of a circular
equatorial orbit. Units: metres, seconds of TCG (the coordinate time of the GCRS),
radians. Positions are in a frame whose z axis is the Earth's pole.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..kepler import solve_kepler


@dataclass(frozen=True)
class MeanElements:
    """Mean elements of the theory at its epoch: metres, radians (pole frame)."""

    a_m: float
    e: float
    i_rad: float
    raan_rad: float
    argp_rad: float
    m_rad: float


@dataclass(frozen=True)
class J2Field:
    """The central body the theory needs: GM (m^3/s^2), J2, its reference radius (m), and J3
    (0 to leave out the long-period eccentricity term)."""

    gm_m3_per_s2: float
    j2: float
    radius_m: float
    j3: float = 0.0


def secular_rates(el: MeanElements, field: J2Field):
    """(dRAAN/dt, dargp/dt, dM/dt), rad per TCG second (Vallado, 4th ed., eqs. 9-39 to 9-42)."""
    n = math.sqrt(field.gm_m3_per_s2 / el.a_m**3)
    p = el.a_m * (1.0 - el.e * el.e)
    q = field.j2 * (field.radius_m / p) ** 2
    c = math.cos(el.i_rad)
    raan_rate = -1.5 * n * q * c
    argp_rate = 0.75 * n * q * (5.0 * c * c - 1.0)
    m_rate = n * (1.0 + 0.75 * q * math.sqrt(1.0 - el.e * el.e) * (3.0 * c * c - 1.0))
    return raan_rate, argp_rate, m_rate


def osculating_state(el: MeanElements, field: J2Field, tau_s) -> tuple[np.ndarray, np.ndarray]:
    """Osculating position (m) and velocity (m/s, per TCG second), each (N, 3), pole frame.

    ``tau_s``: TCG seconds since the epoch of ``el``. The mean angles drift at the
    secular rates; the short-period corrections of the module docstring are added
    in polar-nodal variables, which give the state without a division by e or sin i.

    With J3 the mean eccentricity vector (e cos argp, e sin argp) turns at the perigee rate
    about the frozen eccentricity (0, e_f), e_f = -(J3 / 2 J2) (R/p) sin i: the long-period
    J3 term in its near-circular form (the frozen-orbit eccentricity of J2 + J3, e.g. CNES
    CelestLab ``CL_op_frozenOrbit``: ecc = -0.5 sin(i) (R/a) J3/J2 at argp = 90 deg; the
    circling at the J2 perigee rate: Cook 1966, Planet. Space Sci. 14:433, cited from
    memory). Both are checked against the numerical integration in the tests, which is what
    we rely on. The mean longitude M + argp keeps its rate.
    """
    tau = np.atleast_1d(np.asarray(tau_s, dtype=float))
    raan_rate, argp_rate, m_rate = secular_rates(el, field)
    raan = el.raan_rad + raan_rate * tau
    if field.j3 == 0.0 or el.e == 0.0 and math.sin(el.i_rad) == 0.0:
        return osculating_at(el, field, raan, el.argp_rad + argp_rate * tau, el.m_rad + m_rate * tau)
    p = el.a_m * (1.0 - el.e * el.e)
    e_frozen = -0.5 * field.j3 / field.j2 * field.radius_m / p * math.sin(el.i_rad)
    free = complex(el.e * math.cos(el.argp_rad), el.e * math.sin(el.argp_rad) - e_frozen)
    z = free * np.exp(1j * argp_rate * tau)
    k, h = z.real, z.imag + e_frozen
    argp = np.arctan2(h, k)
    m = el.m_rad + el.argp_rad + (m_rate + argp_rate) * tau - argp
    return osculating_at(el, field, raan, argp, m, e=np.hypot(k, h))


def osculating_at(el: MeanElements, field: J2Field, raan, argp, m, e=None):
    """The osculating state for mean angles given as arrays (a, i from ``el``; e from ``el``
    or an array of mean eccentricities)."""
    gm, a = field.gm_m3_per_s2, el.a_m
    raan, argp, m = np.broadcast_arrays(np.asarray(raan, float), np.asarray(argp, float),
                                        np.asarray(m, float))
    if e is None:
        e = el.e
        ecc = solve_kepler(m, e)
    else:
        ecc = _solve_kepler_varying(m, e)
    eta = np.sqrt(1.0 - e * e)
    beta = e / (1.0 + eta)
    # f - E without a branch cut, so that phi = f - M is continuous in time.
    f_minus_e = 2.0 * np.arctan2(beta * np.sin(ecc), 1.0 - beta * np.cos(ecc))
    f = ecc + f_minus_e
    phi = f_minus_e + e * np.sin(ecc)
    p = a * eta * eta
    ecf, esf = e * np.cos(f), e * np.sin(f)
    r = p / (1.0 + ecf)
    sqrt_gm_p = np.sqrt(gm / p)
    r_dot = sqrt_gm_p * esf
    u = f + argp
    q = field.j2 * (field.radius_m / p) ** 2
    s, c = math.sin(el.i_rad), math.cos(el.i_rad)
    s2, c2 = s * s, c * c
    k3 = (3.0 * c2 - 1.0) / (1.0 + eta)
    s2u, c2u = np.sin(2.0 * u), np.cos(2.0 * u)
    f2w = f + 2.0 * argp
    f32w = 3.0 * f + 2.0 * argp
    one_ecf2 = (1.0 + ecf) ** 2
    dr = -0.25 * q * p * ((3.0 * c2 - 1.0) * (2.0 * eta / (1.0 + ecf) + ecf / (1.0 + eta) + 1.0)
                          - s2 * c2u)
    dr_dot = 0.25 * q * sqrt_gm_p * (k3 * esf * (eta * (1.0 + eta) + one_ecf2)
                                     - 2.0 * s2 * one_ecf2 * s2u)
    du = -0.125 * q * (6.0 * (1.0 - 5.0 * c2) * phi + 4.0 * esf * (1.0 - 6.0 * c2 - k3)
                       - k3 * e * e * np.sin(2.0 * f) + 2.0 * (5.0 * c2 - 2.0) * e * np.sin(f2w)
                       + (7.0 * c2 - 1.0) * s2u + 2.0 * c2 * e * np.sin(f32w))
    d_raan = -1.5 * q * c * (phi + esf - 0.5 * s2u - 0.5 * e * np.sin(f2w) - e * np.sin(f32w) / 6.0)
    incl = c2u + e * np.cos(f2w) + e * np.cos(f32w) / 3.0
    di = 0.75 * q * s * c * incl
    # dp = 2 p tan(i) di, written without the tangent so that i = 90 deg is regular.
    dp = 1.5 * q * p * s2 * incl
    return hill_to_cartesian(r + dr, u + du, raan + d_raan, r_dot + dr_dot,
                             np.sqrt(gm * (p + dp)), el.i_rad + di)


def _solve_kepler_varying(m: np.ndarray, e: np.ndarray) -> np.ndarray:
    """E - e sin E = M for an array of small, slowly varying e: Newton from E = M + e sin M on M
    reduced to [-pi, pi] (the revolution count is restored), so 1e-15 rad is reachable."""
    turns = np.round(m / (2.0 * np.pi))
    m_red = m - 2.0 * np.pi * turns
    ecc = m_red + e * np.sin(m_red)
    for _ in range(50):
        step = (ecc - e * np.sin(ecc) - m_red) / (1.0 - e * np.cos(ecc))
        ecc = ecc - step
        if np.max(np.abs(step), initial=0.0) < 1e-15:
            break
    return ecc + 2.0 * np.pi * turns


def hill_to_cartesian(r, u, raan, r_dot, g, inc):
    """Position and velocity from polar-nodal variables (r, u, RAAN, r_dot, G = |r x v|, i).

    v = r_dot r_hat + (G/r) u_hat, with r_hat and u_hat the radial and along-track unit
    vectors of the orbit plane (e.g. Vallado, 4th ed., sec. 2.6, in nodal form).
    """
    cu, su = np.cos(u), np.sin(u)
    co, so = np.cos(raan), np.sin(raan)
    ci, si = np.cos(inc), np.sin(inc)
    r_hat = np.stack([co * cu - so * su * ci, so * cu + co * su * ci, su * si], axis=-1)
    u_hat = np.stack([-co * su - so * cu * ci, -so * su + co * cu * ci, cu * si], axis=-1)
    pos = r[:, None] * r_hat
    vel = r_dot[:, None] * r_hat + (g / r)[:, None] * u_hat
    return pos, vel


def two_body_elements(r_m: np.ndarray, v_m_per_s: np.ndarray, gm_m3_per_s2: float) -> MeanElements:
    """Classical elements of one state (Vallado, 4th ed., algorithm 9), regular conventions at
    e = 0 (argp = 0) and i = 0 or 180 deg (RAAN = 0): the theory only uses the sums then."""
    r = np.asarray(r_m, dtype=float)
    v = np.asarray(v_m_per_s, dtype=float)
    rn = float(np.linalg.norm(r))
    h = np.cross(r, v)
    hn = float(np.linalg.norm(h))
    a = 1.0 / (2.0 / rn - float(v @ v) / gm_m3_per_s2)
    e_vec = np.cross(v, h) / gm_m3_per_s2 - r / rn
    e = float(np.linalg.norm(e_vec))
    inc = math.atan2(math.hypot(h[0], h[1]), h[2])
    raan = math.atan2(h[0], -h[1]) if math.hypot(h[0], h[1]) > 1e-15 * hn else 0.0
    node = np.array([math.cos(raan), math.sin(raan), 0.0])
    q_hat = np.cross(h / hn, node)
    u = math.atan2(float(r @ q_hat), float(r @ node))
    argp = math.atan2(float(e_vec @ q_hat), float(e_vec @ node)) if e > 1e-14 else 0.0
    f = u - argp
    ecc = 2.0 * math.atan2(math.sqrt(1.0 - e) * math.sin(f / 2), math.sqrt(1.0 + e) * math.cos(f / 2))
    return MeanElements(a, e, inc, raan, argp, ecc - e * math.sin(ecc))


def mean_from_osculating(r_m: np.ndarray, v_m_per_s: np.ndarray, field: J2Field,
                         max_iterations: int = 30) -> MeanElements:
    """Mean elements whose osculating state at their epoch is (r, v) (pole frame).

    Fixed-point iteration on the state: the mean elements are carried as the two-body state
    they convert to, corrected by (target - theory) until the theory reproduces the target
    within 1e-7 m and 1e-10 m/s. The short-period map is the identity plus O(J2), so each
    iteration gains about three digits.
    """
    r0 = np.asarray(r_m, dtype=float)
    v0 = np.asarray(v_m_per_s, dtype=float)
    x, w = r0.copy(), v0.copy()
    el = two_body_elements(x, w, field.gm_m3_per_s2)
    for _ in range(max_iterations):
        r1, v1 = osculating_state(el, field, 0.0)
        dr, dv = r0 - r1[0], v0 - v1[0]
        x, w = x + dr, w + dv
        el = two_body_elements(x, w, field.gm_m3_per_s2)
        if np.max(np.abs(dr)) < 1e-7 and np.max(np.abs(dv)) < 1e-10:
            break
    return el


def with_semi_major_axis(el: MeanElements, a_m: float) -> MeanElements:
    return replace(el, a_m=float(a_m))
