"""Earth's gravitational potential: point mass plus zonal harmonics (EGM2008 J2..J6).

    U_E(x) = (GM/r) [1 - sum_{n=2}^{N} J_n (a_E/r)^n P_n(sin phi)]

(TN36 eq. 10.6 with the zonal part of the geopotential; Heiskanen & Moritz
1967 eq. 2-77), phi being the geocentric latitude in the Earth-fixed frame,
here sin phi = r . p / |r| with p the rotation pole in the GCRS. Positive
convention: U > 0, larger nearer the Earth. Tesseral and sectoral terms are
omitted (C22 ~ 2.4e-6 normalised; their size is reported by the budget).
"""

from __future__ import annotations

import numpy as np

from ..constants import (
    EGM2008_J,
    EGM2008_REFERENCE_RADIUS_M,
    GM_EARTH_TCG_M3_PER_S2,
    MAX_ZONAL_DEGREE,
)


def legendre_p(n_max: int, x: np.ndarray) -> np.ndarray:
    """(n_max+1, N) Legendre polynomials P_0..P_n_max at x (Bonnet recurrence)."""
    x = np.asarray(x, dtype=float)
    out = np.empty((n_max + 1,) + x.shape)
    out[0] = 1.0
    if n_max >= 1:
        out[1] = x
    for n in range(1, n_max):
        out[n + 1] = ((2 * n + 1) * x * out[n] - n * out[n - 1]) / (n + 1)
    return out


def zonal_series(r_m, sin_lat, coefficients: dict[int, float], reference_radius_m: float):
    """sum_n J_n (a/r)^n P_n(sin phi) for the given {n: J_n}, dimensionless."""
    if not coefficients:
        return np.zeros_like(np.asarray(r_m, dtype=float))
    n_max = max(coefficients)
    p = legendre_p(n_max, sin_lat)
    ratio = reference_radius_m / np.asarray(r_m, dtype=float)
    total = np.zeros_like(ratio)
    for n, jn in coefficients.items():
        total = total + jn * ratio**n * p[n]
    return total


def earth_potential(r_gcrs_m: np.ndarray, pole_gcrs: np.ndarray | None, degree: int,
                    gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2, sin_lat: np.ndarray | None = None):
    """Monopole and zonal parts of U_E at (N, 3) GCRS positions, m^2/s^2.

    ``degree`` 0 gives a point mass; 2..6 adds EGM2008 J2..J_degree. The latitude comes from
    ``sin_lat`` when given (e.g. from TEME, whose z axis is the true pole), else from the pole.
    Returns ``(u_monopole, u_zonal)`` with U_E = u_monopole + u_zonal.
    """
    if degree < 0 or degree > MAX_ZONAL_DEGREE or degree == 1:
        raise ValueError(f"zonal degree must be 0 or 2..{MAX_ZONAL_DEGREE}, got {degree}")
    r = np.linalg.norm(r_gcrs_m, axis=1)
    u_mono = gm_m3_per_s2 / r
    coeffs = {n: j for n, j in EGM2008_J.items() if n <= degree}
    if not coeffs:
        return u_mono, np.zeros_like(r)
    if sin_lat is None:
        sin_lat = np.einsum("ni,ni->n", r_gcrs_m, pole_gcrs) / r
    u_zonal = -u_mono * zonal_series(r, sin_lat, coeffs, EGM2008_REFERENCE_RADIUS_M)
    return u_mono, u_zonal


def omitted_zonal_size(r_m: float, degree: int, gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2):
    """Size of the first zonal term above ``degree`` at radius r, m^2/s^2 (for the budget)."""
    nxt = 2 if degree < 2 else degree + 1
    jn = EGM2008_J.get(nxt)
    if jn is None:
        # EGM2008 J7 ~ 3.5e-7 (normalised C70 = 0.905120844521618e-7: the EGM2008 file's value as
        # carried by the IERS Conventions 2010 software).
        jn = 3.5e-7
    return abs(jn) * (EGM2008_REFERENCE_RADIUS_M / r_m) ** nxt * gm_m3_per_s2 / r_m
