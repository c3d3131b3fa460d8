"""Power-law noise model of an oscillator: h_alpha coefficients and their Allan variance.

IEEE Std 1139-2008 conventions: the one-sided spectral density of fractional frequency
is S_y(f) = sum_alpha h_alpha f^alpha (f in Hz, h_alpha in Hz^(-alpha - 1)), with
alpha = +2 white PM, +1 flicker PM, 0 white FM, -1 flicker FM, -2 random-walk FM;
S_x(f) = S_y(f) / (2 pi f)^2 for the phase (time error) in s.

Allan variance of each term (Barnes et al. 1971, "Characterization of frequency
stability", IEEE Trans. Instrum. Meas. IM-20(2):105, Table I; the same forms are in
IEEE Std 1139 and NIST SP 1065 section 5.2; quoted from memory):
    white PM       sigma_y^2 = 3 f_h h_2 / (4 pi^2 tau^2)                 (2 pi f_h tau >> 1)
    flicker PM     sigma_y^2 = h_1 [1.038 + 3 ln(2 pi f_h tau)] / (4 pi^2 tau^2)
    white FM       sigma_y^2 = h_0 / (2 tau)
    flicker FM     sigma_y^2 = 2 ln 2 h_-1
    random-walk FM sigma_y^2 = (2 pi^2 / 3) h_-2 tau
The phase-noise forms depend on the measurement bandwidth f_h (Hz), which must be given.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import nnls

__all__ = [
    "NOISE_ALPHAS",
    "NOISE_NAMES",
    "allan_variance_per_h",
    "allan_deviation_from_h",
    "HAlphaFit",
    "fit_h_alpha",
]

NOISE_ALPHAS = (2, 1, 0, -1, -2)
"""IEEE Std 1139 exponents, from white PM to random-walk FM."""

NOISE_NAMES = {
    2: "white_pm",
    1: "flicker_pm",
    0: "white_fm",
    -1: "flicker_fm",
    -2: "random_walk_fm",
}

_FLICKER_PM_CONSTANT = 1.038
"""Constant of the flicker PM Allan variance (Barnes et al. 1971, Table I; = 3 gamma - ln 2)."""


def allan_variance_per_h(noise_alpha: int, tau_s, f_h_hz: float | None = None) -> np.ndarray:
    """Allan variance sigma_y^2(tau) per unit h_alpha for one power-law term.

    noise_alpha: 2, 1, 0, -1 or -2; tau_s: averaging times (s, > 0); f_h_hz: measurement
    bandwidth (Hz), required for alpha = 2 and 1 and valid for 2 pi f_h tau >> 1.
    Units: Hz^(alpha + 1) so that h_alpha times it is dimensionless. Formulas: module
    docstring (Barnes et al. 1971, Table I).
    """
    tau = np.asarray(tau_s, dtype=float)
    if noise_alpha in (2, 1):
        if f_h_hz is None or not f_h_hz > 0.0:
            raise ValueError("white PM and flicker PM need the measurement bandwidth f_h_hz > 0")
        if noise_alpha == 2:
            return 3.0 * f_h_hz / (4.0 * math.pi**2 * tau**2)
        return (_FLICKER_PM_CONSTANT + 3.0 * np.log(2.0 * math.pi * f_h_hz * tau)) / (
            4.0 * math.pi**2 * tau**2
        )
    if noise_alpha == 0:
        return 1.0 / (2.0 * tau)
    if noise_alpha == -1:
        return np.full(tau.shape, 2.0 * math.log(2.0))
    if noise_alpha == -2:
        return (2.0 * math.pi**2 / 3.0) * tau
    raise ValueError("noise_alpha must be one of 2, 1, 0, -1, -2")


def allan_deviation_from_h(h_alpha: dict, tau_s, f_h_hz: float | None = None) -> np.ndarray:
    """Allan deviation (dimensionless) of a sum of power-law terms {alpha: h_alpha}.

    tau_s: averaging times (s). Independent terms add in variance. See allan_variance_per_h.
    """
    tau = np.asarray(tau_s, dtype=float)
    total = np.zeros(tau.shape)
    for alpha, h in h_alpha.items():
        if h:
            total = total + float(h) * allan_variance_per_h(int(alpha), tau, f_h_hz)
    return np.sqrt(total)


@dataclass(frozen=True)
class HAlphaFit:
    """Least-squares power-law fit to ADEV points.

    h_alpha: {alpha: coefficient >= 0}; tau_s, adev: the points fitted; adev_fit: the model
    at tau_s; relative_residual: adev_fit / adev - 1; rms_relative_residual: their RMS.
    """

    h_alpha: dict
    tau_s: np.ndarray
    adev: np.ndarray
    adev_fit: np.ndarray
    relative_residual: np.ndarray
    rms_relative_residual: float

    def h_alpha_by_name(self) -> dict:
        """The coefficients keyed by noise name (white_pm ... random_walk_fm)."""
        return {NOISE_NAMES[a]: h for a, h in self.h_alpha.items()}


def fit_h_alpha(tau_s, adev, noise_alphas=None, f_h_hz: float | None = None) -> HAlphaFit:
    """Fit h_alpha >= 0 to Allan deviation points by non-negative least squares on sigma^2.

    tau_s (s), adev (dimensionless): at least as many points as fitted terms. noise_alphas:
    the terms to fit, default the three FM terms, plus white and flicker PM when f_h_hz is
    given. Each equation is divided by the measured sigma^2 (relative weighting, so every
    decade of tau counts alike), columns are scaled to unit norm for conditioning, and
    scipy.optimize.nnls solves the system (Lawson & Hanson 1974 NNLS). Closed forms:
    allan_variance_per_h. A poor fit (large residuals) means the data hold features the
    power-law model lacks (drift, bumps, steps); check residuals before using the model.
    """
    tau = np.asarray(tau_s, dtype=float).ravel()
    sigma = np.asarray(adev, dtype=float).ravel()
    if tau.shape != sigma.shape or tau.size == 0:
        raise ValueError("tau_s and adev must be non-empty and of equal length")
    if np.any(~np.isfinite(tau)) or np.any(tau <= 0) or np.any(~(sigma > 0)):
        raise ValueError("tau_s and adev must be positive and finite")
    if noise_alphas is None:
        noise_alphas = NOISE_ALPHAS if f_h_hz is not None else (0, -1, -2)
    alphas = tuple(int(a) for a in noise_alphas)
    if len(alphas) > tau.size:
        raise ValueError("need at least as many ADEV points as fitted noise terms")
    variance = sigma**2
    design = np.column_stack([allan_variance_per_h(a, tau, f_h_hz) for a in alphas])
    design = design / variance[:, None]
    scale = np.linalg.norm(design, axis=0)
    solution, _ = nnls(design / scale, np.ones_like(variance))
    h = solution / scale
    h_alpha = {a: float(v) for a, v in zip(alphas, h, strict=True)}
    model = allan_deviation_from_h(h_alpha, tau, f_h_hz)
    residual = model / sigma - 1.0
    return HAlphaFit(
        h_alpha=h_alpha,
        tau_s=tau,
        adev=sigma,
        adev_fit=model,
        relative_residual=residual,
        rms_relative_residual=float(np.sqrt(np.mean(residual**2))),
    )
