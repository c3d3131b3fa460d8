"""Measured clock offsets minus the modelled relativistic periodic term: what the clock itself does.

Given a satellite clock's offsets x(t) (clock minus reference, s) at epochs and
the orbit's GCRS states there, the relativistic periodic term (TN36 eq.
10.10/10.11; IS-GPS-200 section 20.3.3.3.3.1)

    dt_per(t) = -(2/c^2) r.v

is subtracted when the data still contain it, then a line is fitted
(offset + secular fractional rate), and what is left is reported: its RMS,
the amplitude of the components at the orbital period and its first harmonic
(a left-over periodic term points at a wrong orbit, a J2 term, or a clock
that follows temperature around the orbit), and, for uniformly sampled data,
the frequency-stability table of physics.clock.stability_table.

Conventions matter here. IGS clock products (SP3 clock column, RINEX clock
AS records) follow the IGS convention of excluding the periodic term: the
user applies -(2/c^2) r.v (Kouba 2004, GPS Solutions 8:170, abstract: the
conventional periodic correction is a dot product of the satellite position and
velocity, applied by the user). For
such data pass ``periodic_term_in_data=False``: nothing is subtracted, and
the size of the term is reported for comparison. Subtracting it from IGS
products would inject a spurious periodic signal of that size. Raw offsets
measured against a ground reference still carry the term
(``periodic_term_in_data=True``). r.v is the same in any frame rotating about
the geocentre (r.(omega x r) = 0), so Earth-fixed states give the same term.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .clock import stability_table
from .constants import C2_M2_PER_S2, L_G
from .errors import PhysicsInputError

MIN_POINTS_FOR_STABILITY = 8
UNIFORM_SPACING_RELATIVE = 1e-6
"""Epochs count as uniform when every step is within this fraction of the median step."""


@dataclass
class ClockResiduals:
    t_s: np.ndarray
    periodic_term_s: np.ndarray  # -(2/c^2) r.v at the epochs
    residual_s: np.ndarray  # after the periodic term (if in the data) and the fitted line
    secular_rate: float  # fractional, per reference second
    offset_at_start_s: float
    periodic_term_subtracted: bool
    orbital_period_s: float | None
    harmonic_amplitudes_s: dict
    stability: object | None
    note: str


def clock_residuals(t_s, clock_offset_s, r_m, v_m_per_s, *, periodic_term_in_data: bool,
                    orbital_period_s: float | None = None) -> ClockResiduals:
    """Separate the relativistic periodic term and a secular line from measured clock offsets.

    ``t_s``: (N,) reference-time seconds (any origin, increasing); ``clock_offset_s``: (N,)
    clock minus reference, s; ``r_m``, ``v_m_per_s``: (N, 3) states at the epochs (GCRS, or
    Earth-fixed: r.v is the same). ``periodic_term_in_data``: whether the offsets still
    contain -(2/c^2) r.v (raw measurements) or not (IGS convention); see the module docstring.
    Errors name ``clock_offset_s`` (the caller maps it to where the data came from).
    """
    field = "clock_offset_s"
    t = np.asarray(t_s, dtype=float)
    x = np.asarray(clock_offset_s, dtype=float)
    r = np.asarray(r_m, dtype=float)
    v = np.asarray(v_m_per_s, dtype=float)
    if t.ndim != 1 or t.size < 3 or x.shape != t.shape or r.shape != (t.size, 3) or v.shape != (t.size, 3):
        raise PhysicsInputError(field, int(t.size), "clock residuals need at least 3 epochs with an offset "
                                "and a state each")
    if np.any(np.diff(t) <= 0):
        raise PhysicsInputError(field, None, "clock epochs must increase")
    ok = np.isfinite(x) & np.all(np.isfinite(r), axis=1) & np.all(np.isfinite(v), axis=1)
    t, x, r, v = t[ok], x[ok], r[ok], v[ok]
    if t.size < 3:
        raise PhysicsInputError(field, int(t.size), "fewer than 3 epochs have both a clock value and a state")
    # Per reference (TT-rate) second, as in physics/budget.py.
    periodic = -2.0 * np.einsum("ni,ni->n", r, v) / ((1.0 - L_G) * C2_M2_PER_S2)
    y = x - periodic if periodic_term_in_data else x.copy()
    t0 = t[0]
    tc = t - t0
    slope, intercept = np.polyfit(tc, y, 1)
    resid = y - (intercept + slope * tc)
    harmonics = {}
    if orbital_period_s is not None and tc[-1] >= orbital_period_s:
        w = 2.0 * np.pi / orbital_period_s
        # Columns of like size and a centred right-hand side: unscaled, t (up to ~1e5 s) against
        # ones made the solve lose cond x eps x |offset| (5e-15 s on a 2.5e-4 s clock bias).
        t_scale = tc[-1]
        y_mean = float(np.mean(y))
        cols = [np.ones_like(tc), tc / t_scale]
        for k in (1, 2):
            cols += [np.cos(k * w * tc), np.sin(k * w * tc)]
        coef, *_ = np.linalg.lstsq(np.stack(cols, axis=1), y - y_mean, rcond=None)
        slope, intercept = coef[1] / t_scale, coef[0] + y_mean
        harmonics = {"orbital_period": float(np.hypot(coef[2], coef[3])),
                     "half_orbital_period": float(np.hypot(coef[4], coef[5]))}
        resid = y - (intercept + slope * tc)
    stab = None
    steps = np.diff(tc)
    if tc.size >= MIN_POINTS_FOR_STABILITY and np.all(
            np.abs(steps / np.median(steps) - 1.0) < UNIFORM_SPACING_RELATIVE):
        stab = stability_table(resid, float(np.median(steps)), "phase")
    note = ("periodic term -(2/c^2) r.v subtracted from the data" if periodic_term_in_data else
            "data taken to follow the IGS convention (periodic term already excluded); nothing subtracted")
    if stab is None:
        note += "; no stability table (fewer than 8 points or non-uniform epochs)"
    note += ". Planning-grade analysis: the orbit's own errors enter through r.v."
    return ClockResiduals(t, periodic, resid, float(slope), float(intercept), bool(periodic_term_in_data),
                          orbital_period_s, harmonics, stab, note)
