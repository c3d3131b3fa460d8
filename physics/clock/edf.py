"""Equivalent degrees of freedom and chi-squared confidence bounds of stability variances.

Every variance computed in :mod:`physics.clock.stability` is a mean of squares,
V = (1/M) sum_k z_k^2, of a filtered phase sequence z_k (taken every `stride`
samples). For Gaussian noise with a known spectrum its distribution is close
to a scaled chi-squared with EDF = 2 E[V]^2 / Var[V] degrees of freedom
(NIST SP 1065, section 5.3, "Confidence intervals"; Greenhall & Riley 2003,
"Uncertainty of stability variances based on finite differences", Proc. 35th
PTTI Meeting, eq. for edf = 2 E^2/Var). We evaluate that ratio directly:

    Var[V] = (2/M^2) sum_{|k|<M} (M - |k|) R_z(k * stride)^2,   E[V] = R_z(0),

so EDF = M R_z(0)^2 / sum_{|k|<M} (1 - |k|/M) R_z(k * stride)^2,

with the autocovariance R_z of the filtered sequence obtained by numerical
integration (a long inverse real FFT) of its spectrum. The phase noise model
is the discrete power law that the Kasdin & Walter (1992) generator in
:mod:`physics.clock.simulate` produces: S_x(f) proportional to
|2 sin(pi f)|^(alpha - 2), f in cycles per sample, alpha the IEEE Std 1139
exponent of S_y(f) = h_alpha f^alpha. This is an exact (to FFT resolution)
evaluation of the Greenhall-Riley quantity, not their closed-form tables, and
not the older Howe-Allan-Barnes (1981) empirical fits; it agrees with both
within the scatter of those approximations (see tests).

Every statistic here can be written as z = (1 - B)^d b * x, where B is the
one-sample delay, d the order of the difference and b a repeated boxcar of m
ones: ADEV/OADEV d = 2 with b = box_m^2; MDEV/TDEV d = 2 with b = box_m^3;
HDEV/OHDEV d = 3 with b = box_m^3. Its spectrum is then
|2 sin(pi f)|^(alpha - 2 + 2d) |B_m(f)|^(2 * boxes), |B_m(f)| =
|sin(pi f m) / sin(pi f)|, which is finite at f = 0 whenever alpha + 2d >= 2.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import chi2

__all__ = ["equivalent_degrees_of_freedom", "chi2_bounds"]

_MIN_FFT_SIZE = 256


def equivalent_degrees_of_freedom(
    noise_alpha: float,
    n_terms: int,
    averaging_factor: int,
    difference_order: int,
    box_count: int,
    stride_samples: int,
) -> float:
    """EDF of a mean-of-squares stability variance for power-law noise of exponent alpha.

    noise_alpha: IEEE Std 1139 exponent of S_y(f) (2 white PM ... -2 random-walk FM);
    requires noise_alpha + 2 * difference_order >= 2. n_terms: number M of squared
    terms averaged; averaging_factor: m (tau = m * tau0); difference_order: d
    (2 for Allan and modified Allan, 3 for Hadamard); box_count: boxcars of length
    m in the filter (2 for Allan, 3 for modified Allan and Hadamard); stride_samples:
    spacing of the averaged terms (1 overlapping, m non-overlapping).
    Returns NaN when n_terms < 1. Method: module docstring (Greenhall & Riley 2003
    definition edf = 2 E[V]^2 / Var[V], evaluated numerically).
    """
    n_terms = int(n_terms)
    m = int(averaging_factor)
    if n_terms < 1 or m < 1:
        return float("nan")
    exponent = noise_alpha - 2.0 + 2.0 * difference_order
    if exponent < 0.0:
        raise ValueError("noise_alpha + 2*difference_order must be >= 2 for a finite variance")
    filter_len = box_count * (m - 1) + 1 + difference_order
    max_lag = (n_terms - 1) * stride_samples
    size = max(_MIN_FFT_SIZE, 2 * (max_lag + 2 * filter_len))
    size = 1 << int(np.ceil(np.log2(size)))
    f = np.fft.rfftfreq(size)
    s = np.sin(np.pi * f)
    with np.errstate(divide="ignore", invalid="ignore"):
        box_gain = np.where(s > 0.0, np.sin(np.pi * f * m) / s, float(m))
        difference_gain = np.abs(2.0 * s) ** exponent
    if exponent == 0.0:
        difference_gain[:] = 1.0
    spectrum = difference_gain * box_gain ** (2 * box_count)
    autocov = np.fft.irfft(spectrum, n=size)
    lags = np.arange(n_terms) * stride_samples
    r = autocov[lags]
    weights = 1.0 - np.arange(1, n_terms) / n_terms
    denominator = r[0] ** 2 + 2.0 * np.sum(weights * r[1:] ** 2)
    return float(n_terms * r[0] ** 2 / denominator)


def chi2_bounds(
    variance: np.ndarray, edf: np.ndarray, confidence: float = 0.683
) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper confidence bounds of a variance from its EDF (two-sided, chi-squared).

    variance, edf: arrays of equal shape (NaN passes through); confidence in (0, 1),
    default 0.683 (the 1-sigma convention). Returns (lower, upper) variances:
    lower = V edf / chi2.ppf((1 + p)/2, edf), upper = V edf / chi2.ppf((1 - p)/2, edf)
    (NIST SP 1065, section 5.3.2, chi-squared confidence intervals).
    """
    if not 0.0 < confidence < 1.0:
        raise ValueError("confidence must lie in (0, 1)")
    variance = np.asarray(variance, dtype=float)
    edf = np.asarray(edf, dtype=float)
    lower = np.full(variance.shape, np.nan)
    upper = np.full(variance.shape, np.nan)
    ok = np.isfinite(variance) & np.isfinite(edf) & (edf > 0.0)
    lower[ok] = variance[ok] * edf[ok] / chi2.ppf(0.5 * (1.0 + confidence), edf[ok])
    upper[ok] = variance[ok] * edf[ok] / chi2.ppf(0.5 * (1.0 - confidence), edf[ok])
    return lower, upper
