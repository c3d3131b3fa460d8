"""Two-body motion: a vectorised Kepler-equation solver and elements -> state.

Elliptic orbits only (0 <= e < 1). Newton-Raphson on E - e sin E = M from
Danby's starter E0 = M + 0.85 e sign(sin M) (Danby 1987, Celest. Mech. 40:303),
iterated on the whole array until every node has |dE| < 1e-15 rad; the loop
is over iterations (typically 4 to 8, at most 60), never over nodes.
"""

from __future__ import annotations

import numpy as np

KEPLER_TOLERANCE_RAD = 1e-15
"""Stop once every Newton step is below this, rad."""

_MAX_ITERATIONS = 60


def solve_kepler(mean_anomaly_rad: np.ndarray, eccentricity: float) -> np.ndarray:
    """Eccentric anomaly E (rad) with E - e sin E = M, for 0 <= e < 1.

    ``mean_anomaly_rad`` may be any real array; the result has the same
    revolution count as M (E - M is in [-e, e]).
    """
    m = np.asarray(mean_anomaly_rad, dtype=float)
    e = float(eccentricity)
    if not 0.0 <= e < 1.0:
        raise ValueError(f"eccentricity {e} is outside [0, 1) for an elliptic orbit")
    turns = np.round(m / (2.0 * np.pi))
    m_red = m - 2.0 * np.pi * turns  # in [-pi, pi]
    if e == 0.0:
        return m.copy()
    ecc = m_red + 0.85 * e * np.sign(np.sin(m_red))
    active = np.arange(m_red.size)
    flat_e, flat_m = ecc.reshape(-1), m_red.reshape(-1)
    for _ in range(_MAX_ITERATIONS):
        # Iterate only the nodes that have not converged yet.
        x = flat_e[active]
        step = (x - e * np.sin(x) - flat_m[active]) / (1.0 - e * np.cos(x))
        flat_e[active] = x - step
        active = active[np.abs(step) >= KEPLER_TOLERANCE_RAD]
        if active.size == 0:
            break
    return ecc + 2.0 * np.pi * turns


def perifocal_to_inertial_matrix(raan_rad, inclination_rad, arg_pericenter_rad) -> np.ndarray:
    """(N, 3, 3) or (3, 3) rotation R3(-raan) R1(-i) R3(-argp) (Vallado, 4th ed., eq. 2-101)."""
    co, so = np.cos(raan_rad), np.sin(raan_rad)
    ci, si = np.cos(inclination_rad), np.sin(inclination_rad)
    cw, sw = np.cos(arg_pericenter_rad), np.sin(arg_pericenter_rad)
    co, so, ci, si, cw, sw = np.broadcast_arrays(co, so, ci, si, cw, sw)
    rows = [
        [co * cw - so * sw * ci, -co * sw - so * cw * ci, so * si],
        [so * cw + co * sw * ci, -so * sw + co * cw * ci, -co * si],
        [sw * si, cw * si, ci],
    ]
    return np.moveaxis(np.array(rows, dtype=float), (0, 1), (-2, -1))


def elements_to_state(
    gm_m3_per_s2: float,
    semi_major_axis_m: float,
    eccentricity: float,
    inclination_rad,
    raan_rad,
    arg_pericenter_rad,
    mean_anomaly_rad,
):
    """Position (m) and velocity (m/s), each (N, 3), in the frame of the elements.

    Angles may be arrays of the same length N (for secularly drifting elements).
    Standard two-body relations (Vallado, Fundamentals of Astrodynamics and
    Applications, 4th ed., algorithm 10).
    """
    a, e = float(semi_major_axis_m), float(eccentricity)
    ecc_anom = solve_kepler(np.atleast_1d(mean_anomaly_rad), e)
    ce, se = np.cos(ecc_anom), np.sin(ecc_anom)
    b = a * np.sqrt(1.0 - e * e)
    x_pf = a * (ce - e)
    y_pf = b * se
    r = a * (1.0 - e * ce)
    factor = np.sqrt(gm_m3_per_s2 * a) / r
    vx_pf = -factor * se
    vy_pf = factor * np.sqrt(1.0 - e * e) * ce
    rot = perifocal_to_inertial_matrix(raan_rad, inclination_rad, arg_pericenter_rad)
    if rot.ndim == 2:
        rot = np.broadcast_to(rot, (len(ecc_anom), 3, 3))
    r_vec = rot[:, :, 0] * x_pf[:, None] + rot[:, :, 1] * y_pf[:, None]
    v_vec = rot[:, :, 0] * vx_pf[:, None] + rot[:, :, 1] * vy_pf[:, None]
    return r_vec, v_vec, ecc_anom
