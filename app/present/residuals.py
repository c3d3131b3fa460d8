"""A measured-clock analysis (``physics.clock_residuals.ClockResiduals``, SI) -> its JSON data."""

from __future__ import annotations

import numpy as np
from taubudget.physics.constants import SECONDS_PER_DAY

from .budget import NS_PER_S, US_PER_S


def residuals(r) -> dict:
    """The secular rate, the periodic term and the residual, in the units the CLI and API report."""
    out = {
        "points": int(r.t_s.size),
        "span_s": float(r.t_s[-1] - r.t_s[0]),
        "periodic_term_subtracted": r.periodic_term_subtracted,
        "periodic_term_amplitude_ns": 0.5 * float(np.ptp(r.periodic_term_s)) * NS_PER_S,
        "secular_fractional_rate": r.secular_rate,
        "secular_rate_us_per_day": r.secular_rate * SECONDS_PER_DAY * US_PER_S,
        "offset_at_start_ns": r.offset_at_start_s * NS_PER_S,
        "residual_rms_ns": float(np.sqrt(np.mean(r.residual_s**2))) * NS_PER_S,
        "residual_peak_to_peak_ns": float(np.ptp(r.residual_s)) * NS_PER_S,
        "orbital_period_s": r.orbital_period_s,
        "residual_periodic_amplitude_ns": {k: v * NS_PER_S for k, v in r.harmonic_amplitudes_s.items()},
        "note": r.note,
    }
    if r.stability is not None:
        out["deviations"] = r.stability.rows()
    return out
