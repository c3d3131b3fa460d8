"""The normal gravity field of the GRS80 level ellipsoid, for clocks on the ground.

The normal potential is the field of a rotating level ellipsoid whose surface
is the equipotential U = U0. Its gravitational part has only even zonal
terms, in closed form (Moritz, Geodetic Reference System 1980, J. Geodesy 74
(2000) 128, eq. for J_2n; Heiskanen & Moritz 1967 eq. 2-92):

    J_2n = (-1)^(n+1) 3 e^(2n) / ((2n+1)(2n+3)) (1 - n + 5 n J2 / e^2)

with e^2 the first eccentricity squared. V(x) = (GM/r)[1 - sum J_2n (a/r)^2n
P_2n(sin phi)], and on the ellipsoid V + (1/2) omega^2 (x^2 + y^2) = U0.
Normal gravity on the ellipsoid from Somigliana's formula (Moritz 2000).
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import (
    GRS80_A_M,
    GRS80_E2,
    GRS80_GAMMA_E_M_PER_S2,
    GRS80_GAMMA_P_M_PER_S2,
    GRS80_GM_M3_PER_S2,
    GRS80_J2,
    GRS80_OMEGA_RAD_PER_S,
)
from .earth import zonal_series

NORMAL_FIELD_MAX_HALF_DEGREE = 5
"""J2..J10: J10 at the surface is ~4e-14 of GM/a, ~3e-6 m^2/s^2, 3e-23 in rate."""


def grs80_zonals(max_half_degree: int = NORMAL_FIELD_MAX_HALF_DEGREE) -> dict[int, float]:
    """{2n: J_2n} of the GRS80 normal field for n = 1..max_half_degree (closed form above)."""
    e2 = GRS80_E2
    out = {}
    for n in range(1, max_half_degree + 1):
        out[2 * n] = (
            (-1) ** (n + 1) * 3 * e2**n / ((2 * n + 1) * (2 * n + 3)) * (1 - n + 5 * n * GRS80_J2 / e2)
        )
    return out


_ZONALS = grs80_zonals()


def normal_gravitational_potential(r_itrs_m: np.ndarray) -> np.ndarray:
    """Gravitational (non-rotational) part of the GRS80 normal potential, m^2/s^2."""
    r_itrs_m = np.atleast_2d(r_itrs_m)
    r = np.linalg.norm(r_itrs_m, axis=1)
    sin_lat = r_itrs_m[:, 2] / r
    return GRS80_GM_M3_PER_S2 / r * (1.0 - zonal_series(r, sin_lat, _ZONALS, GRS80_A_M))


def normal_potential(r_itrs_m: np.ndarray) -> np.ndarray:
    """Full normal potential U = V + (1/2) omega^2 (x^2 + y^2) in the ITRS, m^2/s^2."""
    r_itrs_m = np.atleast_2d(r_itrs_m)
    centrifugal = 0.5 * GRS80_OMEGA_RAD_PER_S**2 * (r_itrs_m[:, 0] ** 2 + r_itrs_m[:, 1] ** 2)
    return normal_gravitational_potential(r_itrs_m) + centrifugal


def normal_gravity_on_ellipsoid(geodetic_lat_rad: float) -> float:
    """Somigliana normal gravity at the ellipsoid surface, m/s^2 (Moritz 2000)."""
    b = GRS80_A_M * math.sqrt(1.0 - GRS80_E2)
    c2, s2 = math.cos(geodetic_lat_rad) ** 2, math.sin(geodetic_lat_rad) ** 2
    return (GRS80_A_M * GRS80_GAMMA_E_M_PER_S2 * c2 + b * GRS80_GAMMA_P_M_PER_S2 * s2) / math.sqrt(
        GRS80_A_M**2 * c2 + b**2 * s2
    )
