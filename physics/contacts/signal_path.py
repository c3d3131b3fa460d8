"""Signal-path numbers of a one-way satellite-to-station (downlink) time-transfer link.

All positions in the GCRS with TCG as coordinate time (DESIGN.md), except the
Sagnac term, which is the rotating-frame (ITRS) bookkeeping of the same delay.

Light time. The signal received at the station at t_R left the satellite at
t_E with c (t_R - t_E) = |x_R(t_R) - x_E(t_E)| + Shapiro delay, solved by fixed
point iteration (converges by a factor v/c ~ 1e-5 per step). The Shapiro
delay is (2 GM/c^3) ln((r_E + r_R + rho)/(r_E + r_R - rho)) (IERS Conventions
2010, TN36 eq. 11.17 with gamma = 1). Light times are reported in TCG
seconds; node times stay TT seconds (the two differ by L_G ~ 7e-10 of the
light time, < 0.1 ns).

Sagnac. Written in the Earth-fixed frame, the same light time is
|X_R(t_R) - X_E(t_E)|/c + (2 omega / c^2) A, with A = (1/2) z.(X_E x X_R) the
area swept, projected on the equatorial plane, by the geocentric radius vector
following the signal (Ashby 2003, Living Reviews in Relativity 6:1, eq. 15;
one eastward circuit of the equator gives 207.4 ns). The difference between
the two forms is O((omega r / c)^2) of the light time (sub-picosecond).

Frequency. The station measures f_R/f_E = (dtau_E/dt)(t_E) / (dtau_R/dt)(t_R)
x dt_E/dt_R with dt_E/dt_R = (1 - n.v_R/c)/(1 - n.v_E/c), n the unit vector
from emitter to receiver (differentiating the light-time equation). The proper
rates are the engine's own first-order rates (TN36 eq. 10.6 through
``physics.rate``: the satellite in the actual field, the station in the GRS80
normal field plus gamma N), so the shift is complete to first order in 1/c^2
and carries the first-order Doppler -n.(v_R - v_E)/c exactly. Omitted: the
rate of change of the Shapiro delay (< 1e-13 for near-Earth links),
troposphere and ionosphere.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import (
    C2_M2_PER_S2,
    C_M_PER_S,
    EARTH_ROTATION_RATE_RAD_PER_S,
    GM_EARTH_TCG_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    L_G,
)
from ..rate import GravityModel, clock_terms_vs_tt

LIGHT_TIME_ITERATIONS = 4
"""Fixed-point iterations: each gains a factor ~v/c ~ 1e-5, so 4 leave < 1e-20 s."""


def swept_area_m2(r_from_itrs_m, r_to_itrs_m) -> np.ndarray:
    """Equatorial-plane projected area swept by the geocentric radius from ``r_from`` to ``r_to``, m^2.

    A = (1/2) (x1 y2 - y1 x2), positive for eastward (anticlockwise seen from the north) motion.
    """
    a = np.asarray(r_from_itrs_m, dtype=float)
    b = np.asarray(r_to_itrs_m, dtype=float)
    return 0.5 * (a[..., 0] * b[..., 1] - a[..., 1] * b[..., 0])


def sagnac_correction_s(r_from_itrs_m, r_to_itrs_m, omega_rad_per_s: float = EARTH_ROTATION_RATE_RAD_PER_S):
    """Sagnac correction 2 omega A / c^2 (s) for a signal from ``r_from`` to ``r_to`` (ITRS, m).

    Add it to the Earth-fixed geometric light time (Ashby 2003, Living Reviews in Relativity 6:1, eq. 15).
    """
    return 2.0 * omega_rad_per_s * swept_area_m2(r_from_itrs_m, r_to_itrs_m) / C2_M2_PER_S2


def shapiro_delay_s(r_emitter_m, r_receiver_m, gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2,
                    rho_m=None):
    """Gravitational (Shapiro) delay of one body (default: the Earth), s (TN36 eq. 11.17, gamma = 1).

    ``r_emitter_m``, ``r_receiver_m``: positions relative to the body (at emission and at
    reception); ``rho_m``: the emitter-receiver distance when the body moves between the two
    (default: the distance between the two relative positions).
    """
    r1 = np.linalg.norm(r_emitter_m, axis=-1)
    r2 = np.linalg.norm(r_receiver_m, axis=-1)
    rho = (np.linalg.norm(np.asarray(r_receiver_m) - np.asarray(r_emitter_m), axis=-1)
           if rho_m is None else rho_m)
    return 2.0 * gm_m3_per_s2 / (C2_M2_PER_S2 * C_M_PER_S) * np.log((r1 + r2 + rho) / (r1 + r2 - rho))


def one_way_fractional_shift(y_emitter, y_receiver, n_hat, v_emitter_m_per_s, v_receiver_m_per_s):
    """f_R/f_E - 1 for proper rates y = dtau/dt - 1 and GCRS velocities, n_hat from emitter to receiver.

    (1 + y_E)/(1 + y_R) (1 - n.v_R/c)/(1 - n.v_E/c) - 1 (module docstring); dimensionless.
    """
    nv_r = np.einsum("...i,...i->...", n_hat, v_receiver_m_per_s) / C_M_PER_S
    nv_e = np.einsum("...i,...i->...", n_hat, v_emitter_m_per_s) / C_M_PER_S
    # Written as a sum of small terms so nothing of size 1 is subtracted at the end.
    rate_ratio_m1 = (np.asarray(y_emitter) - np.asarray(y_receiver)) / (1.0 + np.asarray(y_receiver))
    doppler_m1 = (nv_e - nv_r) / (1.0 - nv_e)
    return rate_ratio_m1 + doppler_m1 + rate_ratio_m1 * doppler_m1


@dataclass
class SignalPath:
    """Downlink numbers at N reception times (TT seconds since the span start); SI units."""

    reception_s: np.ndarray
    emission_s: np.ndarray
    range_m: np.ndarray
    light_time_s: np.ndarray  # TCG seconds, geometric + Shapiro
    shapiro_delay_s: np.ndarray
    sagnac_correction_s: np.ndarray
    earth_fixed_range_m: np.ndarray
    range_rate_m_per_s: np.ndarray
    fractional_frequency_shift: np.ndarray  # f_R/f_E - 1, complete
    first_order_doppler_shift: np.ndarray  # n.(v_E - v_R)/c
    gravitational_shift: np.ndarray  # (U_R - U_E)/c^2
    time_dilation_shift: np.ndarray  # (v_R^2 - v_E^2)/(2 c^2), GCRS velocities
    doppler_factor_m1: np.ndarray  # dt_E/dt_R - 1 (kinematic, all orders)
    proper_rate_ratio_m1: np.ndarray  # (dtau_E/dt)/(dtau_R/dt) - 1


def downlink(source, station, span, t_receive_s, env, gravity: GravityModel | None = None) -> SignalPath:
    """Signal path from ``source`` (satellite) to ``station`` (GroundStation) received at ``t_receive_s``.

    ``env``: the span's ``Environment``; ``gravity``: terms of the proper rates
    (default: the engine's default field). Bad orbit nodes give NaN rows.
    """
    gravity = gravity or GravityModel()
    t_r = np.atleast_1d(np.asarray(t_receive_s, dtype=float))
    orient = env.orientation
    st_r = station.clock.states(span, t_r, orient)
    x_r, v_r = st_r.r_gcrs_m, st_r.v_gcrs_m_per_s
    t_e = t_r.copy()
    shapiro = np.zeros_like(t_r)
    for _ in range(LIGHT_TIME_ITERATIONS):
        st_e = source.states(span, t_e, orient)
        x_e = np.where((st_e.code != 0)[:, None], np.nan, st_e.r_gcrs_m)
        rho = np.linalg.norm(x_r - x_e, axis=1)
        shapiro = shapiro_delay_s(x_e, x_r)
        light_time = rho / C_M_PER_S + shapiro
        t_e = t_r - light_time * (1.0 - L_G)  # TCG light time -> TT seconds
    v_e = st_e.v_gcrs_m_per_s
    n_hat = (x_r - x_e) / rho[:, None]
    rate_e = clock_terms_vs_tt(source, t_e, gravity, env)
    rate_r = clock_terms_vs_tt(station.clock, t_r, gravity, env)
    # physics.rate gives -(v^2/2 + U)/(c^2 (1 - L_G)); times (1 - L_G) it is dtau/dTCG - 1.
    y_e, y_r = rate_e.total * (1.0 - L_G), rate_r.total * (1.0 - L_G)
    shift = one_way_fractional_shift(y_e, y_r, n_hat, v_e, v_r)
    doppler = np.einsum("ni,ni->n", n_hat, v_e - v_r) / C_M_PER_S
    grav = (1.0 - L_G) * sum(rate_e.terms[k] - rate_r.terms[k] for k in ("monopole", "zonal", "tidal"))
    dil = (1.0 - L_G) * (rate_e.terms["velocity"] - rate_r.terms["velocity"])
    x_e_itrs = orient.gcrs_to_itrs(x_e, t_e)
    x_r_itrs = np.broadcast_to(station.r_itrs_m, x_e_itrs.shape)
    return SignalPath(
        reception_s=t_r, emission_s=t_e, range_m=rho, light_time_s=light_time,
        shapiro_delay_s=shapiro, sagnac_correction_s=sagnac_correction_s(x_e_itrs, x_r_itrs),
        earth_fixed_range_m=np.linalg.norm(x_r_itrs - x_e_itrs, axis=1),
        range_rate_m_per_s=-np.einsum("ni,ni->n", n_hat, v_e - v_r),
        fractional_frequency_shift=shift, first_order_doppler_shift=doppler,
        gravitational_shift=grav, time_dilation_shift=dil,
        doppler_factor_m1=one_way_fractional_shift(0.0, 0.0, n_hat, v_e, v_r),
        proper_rate_ratio_m1=(y_e - y_r) / (1.0 + y_r),
    )


MAX_ITERATED_LIGHT_TIME_S = 3000.0
"""Up to this light time the emission state comes from the span's coarse grids (which extend one
hour before the start); beyond it the geometric value at the reception time is reported."""


def light_time_to_earth(source, span, t_s, ss, orientation, station=None) -> dict:
    """One-way light time (clock -> geocentre, and clock -> ``station``) and solar Shapiro delay.

    ``source``: a barycentric source (``states_bcrs``); ``ss``: the span's solar system. Reception
    at ``t_s`` at the geocentre (or the station, a SurfaceClock carried into the BCRS); emission at
    t - tau with |x_clock(t - tau) - x_rx(t)| = c (tau - Shapiro), solved by fixed-point iteration.
    Shapiro delay of the Sun only (TN36 eq. 11.17; the Earth's own term, < 0.03 ns for lunar links,
    is left out). Coordinate light times in TDB-compatible seconds (DE421's units: distances/c;
    TDB keeps TT's mean rate, so t - tau stays in TT seconds; a TCB light time would be longer by
    L_B tau, 20 us at 1300 s); planning values, not a link model. Returns arrays (s) by name and
    ``light_time_method``.
    """
    def one_way(x_rx):
        xs_rx = ss.position_m("sun", t_s)

        def from_emission_at(t_tx):
            x_tx = source.states_bcrs(span, t_tx, ss, orientation).r_m
            rho = np.linalg.norm(x_tx - x_rx, axis=1)
            shapiro = shapiro_delay_s(x_tx - ss.position_m("sun", t_tx), x_rx - xs_rx, GM_SUN_M3_PER_S2,
                                      rho_m=rho)
            return rho / C_M_PER_S + shapiro, shapiro

        tau = np.linalg.norm(source.states_bcrs(span, t_s, ss, orientation).r_m - x_rx, axis=1) / C_M_PER_S
        iterated = bool(np.all(tau < MAX_ITERATED_LIGHT_TIME_S))
        if not iterated:
            tau, shapiro = from_emission_at(t_s)
        for _ in range(LIGHT_TIME_ITERATIONS if iterated else 0):
            tau, shapiro = from_emission_at(t_s - tau)
        return tau, shapiro, iterated

    xe = ss.position_m("earth", t_s)
    tau, shapiro, iterated = one_way(xe)
    out = {"light_time_to_earth_s": tau, "shapiro_delay_to_earth_s": shapiro,
           "light_time_method": "iterated from emission to reception" if iterated
           else "geometric at the reception time (light time beyond the coarse grid's margin)"}
    if station is not None:
        r_sta, _ = orientation.itrs_to_gcrs(station.r_itrs_m, t_s)
        tau_s, shapiro_s, _ = one_way(xe + r_sta)
        out["light_time_to_station_s"] = tau_s
        out["shapiro_delay_to_station_s"] = shapiro_s
    return out
