"""Simulated power-law clock noise (Kasdin & Walter 1992) and Monte Carlo budget exceedance.

Generator: N. J. Kasdin and T. Walter, "Discrete simulation of power law noise",
Proc. 1992 IEEE Frequency Control Symposium, pp. 274-283 (and N. J. Kasdin, "Discrete
simulation of colored noise and stochastic processes and 1/f^a power law noise
generation", Proc. IEEE 83(5):802, 1995). White Gaussian noise w_k of variance Q is
convolved (by zero-padded FFT) with the causal filter of transfer function
(1 - z^-1)^(-a/2), whose impulse response is h_0 = 1, h_k = h_{k-1} (a/2 + k - 1)/k;
the result has the one-sided PSD S(f) = 2 Q tau0 / |2 sin(pi f tau0)|^a. For fractional
frequency with S_y = h_alpha f^alpha we take a = -alpha and match the low-frequency
limit, Q = h_alpha / (2 tau0 (2 pi tau0)^alpha). Phase-noise terms so generated have
the Nyquist bandwidth f_h = 1 / (2 tau0).

Every realisation starts at the synchronisation (the filter has no history before
sample 0), the convention of :mod:`physics.clock.time_error`. Results are reproducible
for a given seed (numpy.random.default_rng).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .time_error import deterministic_time_error_s

__all__ = [
    "kasdin_walter_noise",
    "simulate_fractional_frequency",
    "simulate_time_error_s",
    "ExceedanceEstimate",
    "exceedance_probability",
]

MAX_SIMULATED_SAMPLES = 50_000_000
"""Largest n_realisations * n_samples accepted (memory guard, about 1.6 GB of FFT work)."""


def _rng(seed):
    return seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)


def kasdin_walter_noise(
    n_samples: int,
    noise_alpha: float,
    h_alpha: float,
    sample_interval_s: float,
    seed=None,
    n_realisations: int = 1,
) -> np.ndarray:
    """Fractional frequency samples of one power-law term, shape (n_realisations, n_samples).

    noise_alpha: IEEE Std 1139 exponent (any real; 2 ... -2 are the clock terms);
    h_alpha: its coefficient (>= 0); sample_interval_s: tau0 > 0; seed: int, None or a
    numpy Generator. Each sample is the average fractional frequency over one interval
    in the discrete model of Kasdin & Walter (1992) (module docstring).
    """
    n = int(n_samples)
    r = int(n_realisations)
    if n < 1 or r < 1:
        raise ValueError("n_samples and n_realisations must be >= 1")
    if n * r > MAX_SIMULATED_SAMPLES:
        raise ValueError("too many samples requested; reduce n_samples or n_realisations")
    tau0 = float(sample_interval_s)
    q = float(h_alpha) / (2.0 * tau0 * (2.0 * math.pi * tau0) ** noise_alpha)
    a = -float(noise_alpha)
    k = np.arange(1, n)
    impulse = np.concatenate(([1.0], np.cumprod((a / 2.0 + k - 1.0) / k)))
    white = _rng(seed).standard_normal((r, n)) * math.sqrt(q)
    size = 1 << int(math.ceil(math.log2(2 * n)))
    spectrum = np.fft.rfft(white, n=size, axis=-1) * np.fft.rfft(impulse, n=size)
    return np.fft.irfft(spectrum, n=size, axis=-1)[:, :n]


def simulate_fractional_frequency(
    h_alpha: dict,
    n_samples: int,
    sample_interval_s: float,
    seed=None,
    n_realisations: int = 1,
) -> np.ndarray:
    """Sum of independent Kasdin-Walter terms {alpha: h}, shape (n_realisations, n_samples)."""
    rng = _rng(seed)
    y = np.zeros((int(n_realisations), int(n_samples)))
    for alpha in sorted(h_alpha):
        if h_alpha[alpha]:
            y += kasdin_walter_noise(n_samples, alpha, h_alpha[alpha], sample_interval_s, rng, n_realisations)
    return y


def simulate_time_error_s(
    h_alpha: dict,
    n_samples: int,
    sample_interval_s: float,
    seed=None,
    n_realisations: int = 1,
) -> tuple[np.ndarray, np.ndarray]:
    """Stochastic time error realisations after a sync: (t_s, x_s) with x_s[:, 0] = 0.

    t_s: 0, tau0, ..., n_samples tau0 (n_samples + 1 points); x_s: shape
    (n_realisations, n_samples + 1), the integral of the simulated fractional frequency.
    """
    y = simulate_fractional_frequency(h_alpha, n_samples, sample_interval_s, seed, n_realisations)
    tau0 = float(sample_interval_s)
    x = np.concatenate((np.zeros((y.shape[0], 1)), np.cumsum(y, axis=1) * tau0), axis=1)
    return np.arange(int(n_samples) + 1) * tau0, x


@dataclass(frozen=True)
class ExceedanceEstimate:
    """Monte Carlo probability that |time error| exceeds a budget before a given time.

    probability: fraction of realisations exceeding; standard_error: binomial sampling
    error sqrt(p (1 - p) / n) (for p = 0 or 1 a rule-of-three upper bound 3/n is more
    telling); n_realisations, n_exceeded; first_exceedance_s: per realisation, the first
    sample time (s) over budget, NaN if none. Planning estimate of the Gaussian model.
    """

    probability: float
    standard_error: float
    n_realisations: int
    n_exceeded: int
    first_exceedance_s: np.ndarray


def exceedance_probability(
    budget_s: float,
    t_end_s: float,
    sample_interval_s: float,
    h_alpha: dict,
    initial_time_offset_s: float = 0.0,
    initial_fractional_frequency: float = 0.0,
    drift_per_day: float = 0.0,
    residual_t_s=None,
    residual_offset_s=None,
    n_realisations: int = 1000,
    seed=None,
) -> ExceedanceEstimate:
    """Probability that |deterministic + simulated noise| > budget at some sample in (0, t_end].

    budget_s > 0 (s); t_end_s > 0 (s) after the sync; sample_interval_s: simulation step
    (s), which also sets the phase-noise bandwidth (module docstring) and the time
    resolution of the check. Deterministic part as time_error.deterministic_time_error_s.
    """
    if not budget_s > 0.0 or not t_end_s > 0.0:
        raise ValueError("budget_s and t_end_s must be positive")
    n = int(math.ceil(t_end_s / sample_interval_s))
    t, x = simulate_time_error_s(h_alpha, n, sample_interval_s, seed, n_realisations)
    det = deterministic_time_error_s(
        t,
        initial_time_offset_s,
        initial_fractional_frequency,
        drift_per_day,
        residual_t_s,
        residual_offset_s,
    )
    over = np.abs(det[None, 1:] + x[:, 1:]) > budget_s
    hit = over.any(axis=1)
    first = np.where(hit, t[1:][np.argmax(over, axis=1)], np.nan)
    p = float(hit.mean())
    return ExceedanceEstimate(
        probability=p,
        standard_error=math.sqrt(p * (1.0 - p) / hit.size),
        n_realisations=int(hit.size),
        n_exceeded=int(hit.sum()),
        first_exceedance_s=first,
    )
