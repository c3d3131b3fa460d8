"""Power-law noise identification by the lag-1 autocorrelation of phase data.

Riley & Greenhall (2004), "Power law noise identification using the lag 1
autocorrelation", Proc. 18th European Frequency and Time Forum; summarised in
NIST SP 1065, section 5.5 (noise identification). For a stationary series with
spectrum proportional to f^(-2 delta), delta < 1/2, the lag-1 autocorrelation
is r1 = delta / (1 - delta), so delta = r1 / (1 + r1). The phase series is
differenced until delta < 1/4; after d differences the phase spectral exponent
is p = -2 (delta + d) and the IEEE Std 1139 frequency exponent alpha = p + 2.

Limitation: after decimation (m > 1) the flicker types sit near a rounding boundary
(for continuous flicker FM averaged over tau the theory gives alpha close to -1.45, from
the structure function of averaged flicker noise), so they can be named as a
neighbouring type; the EDF, and so the confidence bounds, then shift by typically 10-20%.
"""

from __future__ import annotations

import numpy as np

__all__ = ["MIN_POINTS_FOR_NOISE_ID", "noise_alpha_lag1"]

MIN_POINTS_FOR_NOISE_ID = 30
"""Fewest decimated phase points for a lag-1 estimate (common practice; Riley & Greenhall
2004 recommend at least about 30)."""

_MAX_DIFFERENCES = 2  # reaches random-walk FM (alpha = -2), the lowest alpha we model


def noise_alpha_lag1(phase_s: np.ndarray, averaging_factor: int) -> float:
    """Estimated power-law exponent alpha (continuous, -2..2) of phase data at tau = m tau0.

    phase_s: phase (time error) samples in s at a uniform interval; averaging_factor: m,
    the data are decimated to every m-th sample first (Riley & Greenhall 2004, for phase
    data). Returns NaN if fewer than MIN_POINTS_FOR_NOISE_ID points remain. Round the
    result to the nearest integer to name the noise type.
    """
    z = np.asarray(phase_s, dtype=float)[:: int(averaging_factor)]
    if z.size < MIN_POINTS_FOR_NOISE_ID:
        return float("nan")
    d = 0
    while True:
        zc = z - z.mean()
        power = np.dot(zc, zc)
        r1 = np.dot(zc[:-1], zc[1:]) / power if power > 0.0 else 0.0
        delta = r1 / (1.0 + r1)
        if delta < 0.25 or d >= _MAX_DIFFERENCES:
            return float(np.clip(-2.0 * (delta + d) + 2.0, -2.0, 2.0))
        z = np.diff(z)
        d += 1
