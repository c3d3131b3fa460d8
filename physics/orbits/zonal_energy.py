"""Energy consistency of an analytic orbit with the Earth's zonal field.

In an axisymmetric, static field the energy E = v^2/2 - U(x) is conserved, and the
virial identity d(r.v)/dt = v^2 + r.grad U holds. With U = sum_n U_n, U_0 = GM/r and
U_n = -(GM/r) J_n (R/r)^n P_n(sin phi) homogeneous of degree -(n+1) in r
(r.grad U_n = -(n+1) U_n, Euler's theorem), the time average over an orbit gives

    E = ( -<U_0> + sum_{n>=2} (n - 1) <U_n> ) / 2                         (1)

and the clock's integrand v^2/2 + U = E + 2U has the mean -3E + 2 sum_n n <U_n>.
For a circular equatorial orbit in a J2 field, (1) is exact and gives
v^2 = GM/r (1 + 3/2 J2 (R/r)^2) with U = GM/r (1 + J2/2 (R/r)^2), the closed form
of DESIGN.md ("Orbits in an oblate field").

An analytic theory is exact to first order in J2 only. Two choices make the clock's
mean rate independent of its second-order errors:
- the speed at each node is set from the energy, |v| = sqrt(2 (E + U(x))), with U the
  same zonal field the budget evaluates (so v^2/2 - U is conserved exactly);
- the mean semi-major axis is chosen so that the theory's orbit satisfies (1) for that
  energy; the clock's mean rate then depends on the small zonal terms <U_n> alone,
  where the theory's O(J2^2) errors are O(J2^3) of the rate.
Units: SI; positions in a frame whose z axis is the Earth's pole.
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import EGM2008_J, EGM2008_REFERENCE_RADIUS_M
from ..potential.earth import legendre_p
from .zonal_theory import J2Field, MeanElements, osculating_at, with_semi_major_axis

ORBIT_SAMPLES = 256
"""Samples of eccentric anomaly per orbit for the averages of (1). A time average is
<f> = (1/2 pi) int f (1 - e cos E) dE (dM = (1 - e cos E) dE, Kepler's equation): uniform in E the
samples crowd near perigee, where 1/r^(n+1) peaks, and the periodic rule converges geometrically
whatever e. (Uniform in M, 256 samples missed the perigee passage above e ~ 0.93: the mean
semi-major axis of e = 0.95 came out 0.55 % long, and at e = 0.98 the speed became NaN.)"""


def zonal_terms(r_m: np.ndarray, sin_lat: np.ndarray, degree: int, gm_m3_per_s2: float):
    """U_0 = GM/r and [U_2, ..., U_degree] (EGM2008 J_n), m^2/s^2, positive convention."""
    u0 = gm_m3_per_s2 / r_m
    if degree < 2:
        return u0, []
    p = legendre_p(degree, sin_lat)
    ratio = EGM2008_REFERENCE_RADIUS_M / r_m
    return u0, [-u0 * EGM2008_J[n] * ratio**n * p[n] for n in range(2, degree + 1)]


def potential_pole_frame(pos_m: np.ndarray, degree: int, gm_m3_per_s2: float) -> np.ndarray:
    """U(x) = U_0 + sum U_n at (N, 3) positions of the pole frame, m^2/s^2."""
    r = np.linalg.norm(pos_m, axis=1)
    u0, un = zonal_terms(r, pos_m[:, 2] / r, degree, gm_m3_per_s2)
    return u0 + sum(un) if un else u0


def virial_energy(el: MeanElements, field: J2Field, degree: int) -> float:
    """E of eq. (1), m^2/s^2, averaged over one orbit of the theory at the epoch's angles."""
    ecc = 2.0 * math.pi * np.arange(ORBIT_SAMPLES) / ORBIT_SAMPLES
    weight = (1.0 - el.e * np.cos(ecc)) / ORBIT_SAMPLES  # dM/(2 pi) per sample; sums to 1
    pos, _ = osculating_at(el, field, el.raan_rad, el.argp_rad, ecc - el.e * np.sin(ecc))
    r = np.linalg.norm(pos, axis=1)
    u0, un = zonal_terms(r, pos[:, 2] / r, degree, field.gm_m3_per_s2)
    return 0.5 * (-float(u0 @ weight) + sum((k + 1) * float(u @ weight) for k, u in enumerate(un)))


def calibrate_semi_major_axis(el: MeanElements, field: J2Field, degree: int, energy_m2_per_s2: float,
                              max_iterations: int = 8) -> MeanElements:
    """Mean elements with the semi-major axis for which eq. (1) gives ``energy_m2_per_s2``.

    Newton steps with dE/da ~ GM/(2 a^2) (the two-body slope); E is smooth in a and the
    first step lands within O(J2) of the answer, so a few steps reach 1e-15 relative.
    """
    for _ in range(max_iterations):
        de = virial_energy(el, field, degree) - energy_m2_per_s2
        step = -de / (field.gm_m3_per_s2 / (2.0 * el.a_m**2))
        el = with_semi_major_axis(el, el.a_m + step)
        if abs(step) < 1e-15 * el.a_m:
            break
    return el


def energy_consistent_velocity(v_m_per_s: np.ndarray, u_m2_per_s2: np.ndarray,
                               energy_m2_per_s2: float) -> np.ndarray:
    """Velocities rescaled to |v| = sqrt(2 (E + U)); directions kept."""
    speed = np.sqrt(2.0 * (energy_m2_per_s2 + u_m2_per_s2))
    return v_m_per_s * (speed / np.linalg.norm(v_m_per_s, axis=1))[:, None]
