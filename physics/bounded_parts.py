"""Known bounded parts of a far-from-Earth offset, removed before the secular fit.

A secular rate fitted over a finite span absorbs any slow periodic term that is left in the offset.
In the BCRS (TCB coordinate time, TT along the geocentre) the offset of a clock against TT carries
parts whose form is known and whose long-term mean rate is zero by construction:

- the eccentricity term of the clock's own orbit around its centre, -(2/c^2) r.v (TN36 eq. 10.10;
  two-body identity v^2/2 + GM/r = 3GM/(2a) + 2 d(r.v)/dt);
- the same term of the host body's orbit around *its* primary (the Moon around the Earth, Mars
  around the Sun): a clock on or around the Moon inherits the Moon's monthly term;
- the coordinate position term, the total derivative d(v_B.(x - x_B))/dt / c^2 left by expanding
  the external potential and the velocity around a moving local frame B (TN36 eq. 10.4): for the
  Earth-Moon system B is the geocentre, plus the Moon inside it (v_M - v_E).(x - x_M); for Mars,
  the Mars system's centre;
- TDB - TT along the geocentre (TN36 eq. 10.1, 10.4; Fairhead & Bretagnon 1990): periodic, with
  zero mean rate because L_B = L_G + L_C - L_G L_C. A clock of the Earth-Moon system rides with
  the geocentre and carries it in its own barycentric rate, so against TT it cancels; a clock
  elsewhere (Mars, a heliocentric probe) does not, and its offset against TT contains TDB - TT.

A reference scale has its own: TT/TAI/GPS/TCG are TT-like (TDB - TT appears when they are compared
with a clock that does not ride with the Earth), TDB and TCB have none, and ``lunar_surface`` is
TT-like plus the Moon's eccentricity term and the position term of the Moon's centre.

This module evaluates the pieces at nodes (values, not integrals) so the quadrature carries them;
physics/frames/barycentric.py turns them into ``BoundedPart`` objects for the secular fit.
Everything in SI: m^2/s^2 for the node values, s for the parts.
"""

from __future__ import annotations

import numpy as np

from .constants import C2_M2_PER_S2, L_B, L_G

EARTH_MOON_CENTRES = ("earth", "moon")
"""Centres whose clocks ride with the geocentre: their barycentric rate carries TDB - TT."""

HOST_PRIMARY = {"moon": ("earth", "earth"), "mars": ("sun", "sun")}
"""centre: (the body it orbits, the rate term that body's potential is booked in)."""

BCRS_VALUE_ROWS = ("host_r_dot_v", "clock_position", "reference_position", "reference_r_dot_v")
"""Node values the quadrature carries beside the integrated rows in the BCRS (not summed)."""

TT_LIKE_REFERENCES = ("TT", "TAI", "GPS", "TCG", "lunar_surface")
"""References that ride with the geocentre (their offset from TDB is TDB - TT's periodic part)."""

CONVENTIONAL_RATE_VS_TT = {
    "TT": 0.0, "TAI": 0.0, "GPS": 0.0,
    "TCG": L_G / (1.0 - L_G),  # TN36 eq. 10.2
    "TDB": 0.0,  # TN36 eq. 10.1: TDB keeps TT's mean rate by the choice of L_B
    "TCB": L_B / (1.0 - L_B),  # TN36 eq. 10.1: dTCB/dTDB = 1/(1 - L_B)
}
"""Mean rate of each conventional scale against TT, d(scale)/dTT - 1, dimensionless (defining)."""

TCB_RATE_VS_TDB_MEAN = L_B / (1.0 - L_B)
"""Conventional mean of dTCB/dTT - 1, the ``time_scale`` row's mean (TN36 eq. 10.1)."""


def source_centre(source) -> str:
    """The body a barycentric source is centred on: 'earth', 'moon', 'mars' or 'sun'."""
    return getattr(source, "center", "earth")


def _relative_r_dot_v(ss, body: str, primary: str, t_s) -> np.ndarray:
    dx = ss.position_m(body, t_s) - ss.position_m(primary, t_s)
    dv = ss.velocity_m_per_s(body, t_s) - ss.velocity_m_per_s(primary, t_s)
    return np.einsum("ni,ni->n", dx, dv)


def host_r_dot_v_m2_per_s(centre: str, ss, t_s) -> np.ndarray:
    """r.v of the centre around its own primary (Moon-Earth, Mars-Sun); zeros for Earth and Sun."""
    if centre not in HOST_PRIMARY:
        return np.zeros(len(np.atleast_1d(t_s)))
    return _relative_r_dot_v(ss, centre, HOST_PRIMARY[centre][0], t_s)


def clock_position_value_m2_per_s(centre: str, x_bcrs_m, ss, t_s) -> np.ndarray:
    """v_B.(x - x_B) summed over the clock's local frames (its time derivative / c^2 is bounded)."""
    if centre == "sun":
        return np.zeros(len(x_bcrs_m))
    if centre == "mars":
        return np.einsum("ni,ni->n", ss.velocity_m_per_s("mars", t_s), x_bcrs_m - ss.position_m("mars", t_s))
    ve = ss.velocity_m_per_s("earth", t_s)
    out = np.einsum("ni,ni->n", ve, x_bcrs_m - ss.position_m("earth", t_s))
    if centre == "moon":
        dv = ss.velocity_m_per_s("moon", t_s) - ve
        out = out + np.einsum("ni,ni->n", dv, x_bcrs_m - ss.position_m("moon", t_s))
    return out


def reference_position_value_m2_per_s(reference: str, ss, t_s) -> np.ndarray:
    """v_E.(x_M - x_E) for ``lunar_surface`` (its centre's position term against TT); else zeros."""
    if reference != "lunar_surface":
        return np.zeros(len(np.atleast_1d(t_s)))
    return np.einsum("ni,ni->n", ss.velocity_m_per_s("earth", t_s),
                     ss.position_m("moon", t_s) - ss.position_m("earth", t_s))


def reference_r_dot_v_m2_per_s(reference: str, ss, t_s) -> np.ndarray:
    """The Moon's r.v around the Earth for ``lunar_surface``; else zeros."""
    if reference != "lunar_surface":
        return np.zeros(len(np.atleast_1d(t_s)))
    return _relative_r_dot_v(ss, "moon", "earth", t_s)


def eccentricity_part_s(r_dot_v_m2_per_s: np.ndarray, r_dot_v0_m2_per_s: float) -> np.ndarray:
    """-(2/c^2)(r.v - r.v_0) in TT seconds (TN36 eq. 10.10), s."""
    return -2.0 * (r_dot_v_m2_per_s - r_dot_v0_m2_per_s) / ((1.0 - L_G) * C2_M2_PER_S2)


def tdb_minus_tt_periodic_s(span, ss, t_s) -> np.ndarray:
    """TDB - TT along the geocentre from the span start, s: the integral over TT of dTDB/dTT - 1.

    dTDB/dTT = (1 - L_B)/(1 + d) with d = dTT/dTCB - 1 (TN36 eqs. 10.1, 10.4 without the position
    term); every body of DE421 enters, as the definition requires.
    """
    from .quadrature import integrate
    from .rate_bcrs import geocentre_d

    def fun(t):
        d = geocentre_d(ss, t)
        return ((-L_B - d) / (1.0 + d))[None, :]

    q = integrate(fun, 0.0, float(span.duration_s), 86400.0, tol_fractional=1e-20)
    return q.cumulative_at(np.asarray(t_s, dtype=float))[0]
