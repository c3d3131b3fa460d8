"""The periodic part of an offset: extremes, amplitude and the largest components.

Read on a fine uniform grid (FINE_POINTS_PER_PANEL per panel: 48 per orbit at T/2 panels, so a
sampled extreme of a sinusoid is within 1 - cos(pi/48) = 0.2 % of the true one).
"""

from __future__ import annotations

import numpy as np

from ..constants import SECONDS_PER_DAY
from .result import PeriodicComponent

FINE_POINTS_PER_PANEL = 24


def weighted_mean(x: np.ndarray, weights: np.ndarray) -> float:
    return float(np.sum(weights * x) / np.sum(weights))


def half_peak_to_peak(x: np.ndarray) -> float:
    return 0.5 * float(x.max() - x.min())


def components(periodic, t_s, period_s, harmonic_coef_s, span_s, limit=3) -> tuple[PeriodicComponent, ...]:
    """Largest periodic components, largest first.

    With the orbital harmonics fitted: those harmonics (above 1 % of the largest). With a period
    but too short a span: that period alone (amplitude from the peak-to-peak). Clocks without a
    period over a day or more: peaks of a Hann-windowed periodogram. Otherwise none.
    """
    if harmonic_coef_s is not None and len(harmonic_coef_s):
        amps = np.hypot(harmonic_coef_s[0::2], harmonic_coef_s[1::2])
        order = np.argsort(amps)[::-1]
        keep = [k for k in order if amps[k] >= 0.01 * amps[order[0]]][:limit]
        return tuple(PeriodicComponent(float(period_s / (k + 1)), float(amps[k])) for k in keep)
    if period_s is not None:
        return (PeriodicComponent(float(period_s), half_peak_to_peak(periodic)),)
    if span_s < SECONDS_PER_DAY:
        return ()
    n = 8192
    grid = np.linspace(0.0, span_s, n, endpoint=False)
    x = np.interp(grid, t_s, periodic)
    x = x - x.mean()
    spec = np.abs(np.fft.rfft(x * np.hanning(n))) * (4.0 / n)  # Hann coherent gain 1/2
    freqs = np.fft.rfftfreq(n, d=span_s / n)
    inner = spec[2:-1]
    peaks = 2 + np.flatnonzero((inner > spec[1:-2]) & (inner >= spec[3:]))
    peaks = peaks[np.argsort(-spec[peaks], kind="stable")]
    return tuple(PeriodicComponent(float(1.0 / freqs[i]), float(spec[i]))
                 for i in peaks[:limit] if spec[i] > 0.0)
