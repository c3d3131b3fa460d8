"""Combined time error of a clock in orbit: relativistic residual plus the oscillator's own error.

After a synchronisation at t = 0 the clock's time error (clock minus reference, s) is

    x(t) = r(t) + x0 + y0 t + D t^2 / 2 + stochastic part

with r(t) the relativistic offset left once the frequency preset (and, if the user
segment applies it, the eccentricity correction) is removed -- a callable such as
physics.budget.Budget.after_correction_s, evaluated exactly rather than interpolated --
and the clock terms as in physics.clock.time_error (quadratic clock model, ITU-R TF.538;
common practice). The planning envelope is |deterministic| + k sigma.

Beyond the span the residual is not integrated: ``free_running_time`` continues it from its
fitted secular and periodic parts (a least-squares line plus harmonics of the orbital period,
fitted to the exact residual over the span; ``ResidualContinuation``), adds the largest misfit
of that fit within the span to the envelope as a margin, and so finds a free-running time that
may exceed the span. The clock model itself is analytic at any time.

Planning estimates of a Gaussian model (see physics.clock.time_error for its limits).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .clock import ClockModel
from .clock.time_error import SECONDS_PER_DAY, first_crossing_s

__all__ = [
    "CombinedTimeError",
    "combined_time_error",
    "combined_max_free_running_s",
    "ResidualContinuation",
    "continue_residual",
    "FreeRunningTime",
    "free_running_time",
]

SCAN_POINTS = 4000
"""Log-spaced times scanned for the first budget crossing (as physics.clock.max_free_running_s)."""

SCAN_FIRST_S = 1e-3
"""First scanned time after the sync, s."""

CONTINUATION_HARMONICS = 4
"""Harmonics of the orbital period fitted with the line (as the budget's secular fit)."""

CONTINUATION_SAMPLES_PER_PERIOD = 64
"""Residual samples per orbital period for the continuation fit (16 per shortest harmonic)."""

CONTINUATION_MIN_SAMPLES = 512
CONTINUATION_MAX_SAMPLES = 20_000
"""Bounds on the residual samples of the continuation fit (bounded work)."""

FREE_RUNNING_HORIZON_S = 10.0 * 365.25 * SECONDS_PER_DAY
"""How far past the sync the free-running search looks, s (as physics.clock.max_free_running_s)."""


@dataclass(frozen=True)
class CombinedTimeError:
    """Time error at t_s (s after sync), all in s: relativistic residual, clock parts, envelope."""

    t_s: np.ndarray
    relativistic_residual_s: np.ndarray
    initial_time_offset_s: np.ndarray
    initial_frequency_s: np.ndarray
    ageing_s: np.ndarray
    deterministic_s: np.ndarray
    sigma_s: np.ndarray
    sigma_components_s: dict
    k_sigma: float
    bound_s: np.ndarray


def combined_time_error(
    residual_s: Callable[[np.ndarray], np.ndarray],
    clock: ClockModel,
    t_s,
    k_sigma: float,
) -> CombinedTimeError:
    """Deterministic and stochastic time error (s) at t_s (s after sync, >= 0).

    residual_s: the relativistic residual offset r(t) in s, vectorised over t in s;
    clock: the oscillator model; k_sigma >= 0. Model: module docstring.
    """
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    clock_part = clock.time_error(t, k_sigma)
    r = np.asarray(residual_s(t), dtype=float).reshape(t.shape)
    x0 = np.full(t.shape, float(clock.initial_time_offset_s))
    freq = float(clock.initial_fractional_frequency) * t
    ageing = clock_part.deterministic_s - x0 - freq
    det = r + clock_part.deterministic_s
    return CombinedTimeError(
        t_s=t,
        relativistic_residual_s=r,
        initial_time_offset_s=x0,
        initial_frequency_s=freq,
        ageing_s=ageing,
        deterministic_s=det,
        sigma_s=clock_part.sigma_s,
        sigma_components_s=clock_part.sigma_components_s,
        k_sigma=float(k_sigma),
        bound_s=np.abs(det) + float(k_sigma) * clock_part.sigma_s,
    )


def combined_max_free_running_s(
    residual_s: Callable[[np.ndarray], np.ndarray],
    clock: ClockModel,
    budget_s: float,
    k_sigma: float,
    t_max_s: float,
    n_scan: int = SCAN_POINTS,
) -> float:
    """Longest time after the sync (s) before |deterministic| + k sigma first reaches budget_s.

    Scans n_scan log-spaced times in [SCAN_FIRST_S, t_max_s] with the exact residual,
    then refines the first crossing with scipy.optimize.brentq (rtol 1e-12) on the exact
    envelope. Returns 0.0 if |x0| already uses the budget, inf if the budget is not
    reached by t_max_s (the residual is known only up to there, the end of the span). A
    crossing narrower than the scan spacing (about 0.5% of t) could be missed.
    """
    if not budget_s > 0.0:
        raise ValueError("budget_s must be positive")
    if not t_max_s > SCAN_FIRST_S:
        raise ValueError("t_max_s must exceed the first scanned time")
    if abs(clock.initial_time_offset_s) >= budget_s:
        return 0.0

    def excess(t):
        return combined_time_error(residual_s, clock, t, k_sigma).bound_s - budget_s

    grid = np.concatenate(([0.0], np.geomspace(SCAN_FIRST_S, t_max_s, int(n_scan))))
    return first_crossing_s(excess, grid, None, xtol=1e-9, rtol=1e-12)


@dataclass(frozen=True)
class ResidualContinuation:
    """The relativistic residual continued past the span: fitted line plus orbital harmonics.

    r(t) ~ c0 + c1 t + sum_k (a_k cos(k w t) + b_k sin(k w t)), w = 2 pi / period_s, k = 1..n,
    least-squares fitted to the exact residual sampled uniformly over [0, span_s]. Harmonics are
    used only when the span covers one period (else the line alone). misfit_s: the largest
    |exact - fit| on the samples, s.
    """

    span_s: float
    period_s: float | None
    harmonics: int
    coef: np.ndarray
    misfit_s: float

    def _basis(self, t: np.ndarray) -> np.ndarray:
        cols = [np.ones_like(t), t / self.span_s]
        if self.harmonics:
            w = 2.0 * np.pi / self.period_s
            for k in range(1, self.harmonics + 1):
                cols += [np.cos(k * w * t), np.sin(k * w * t)]
        return np.stack(cols, axis=-1)

    def __call__(self, t_s) -> np.ndarray:
        t = np.asarray(t_s, dtype=float)
        return self._basis(t) @ self.coef

    @property
    def secular_rate(self) -> float:
        """Fitted residual rate, s/s (near zero after a preset fitted over the same span)."""
        return float(self.coef[1] / self.span_s)


def continue_residual(
    residual_s: Callable[[np.ndarray], np.ndarray],
    span_s: float,
    period_s: float | None,
    harmonics: int = CONTINUATION_HARMONICS,
) -> ResidualContinuation:
    """Fit the residual r(t) (s, t in s over [0, span_s]) by a line and orbital harmonics.

    period_s: the orbit's period (s), or None for a clock without one (line only). Samples:
    CONTINUATION_SAMPLES_PER_PERIOD per period, within [CONTINUATION_MIN_SAMPLES,
    CONTINUATION_MAX_SAMPLES]; with fewer than 4 samples per shortest harmonic the harmonics
    are dropped. Model: ResidualContinuation.
    """
    if not span_s > 0.0:
        raise ValueError("span_s must be positive")
    use = period_s is not None and period_s > 0.0 and span_s >= period_s
    n = CONTINUATION_MIN_SAMPLES
    if use:
        n = int(np.clip(CONTINUATION_SAMPLES_PER_PERIOD * span_s / period_s,
                        CONTINUATION_MIN_SAMPLES, CONTINUATION_MAX_SAMPLES))
        if n < 4 * harmonics * span_s / period_s:
            use = False
    t = np.linspace(0.0, span_s, n)
    r = np.asarray(residual_s(t), dtype=float).reshape(t.shape)
    probe = ResidualContinuation(span_s, period_s if use else None, harmonics if use else 0,
                                 np.zeros(2 + (2 * harmonics if use else 0)), 0.0)
    basis = probe._basis(t)
    coef, *_ = np.linalg.lstsq(basis, r, rcond=None)
    misfit = float(np.max(np.abs(r - basis @ coef)))
    return ResidualContinuation(span_s, probe.period_s, probe.harmonics, coef, misfit)


@dataclass(frozen=True)
class FreeRunningTime:
    """Longest free-running time after a sync and how it was found.

    t_s: the time (s; inf if not reached by horizon_s); within_span: found inside the span
    (exact residual) rather than past it; continuation: the residual model used past the span
    (None if the search stayed inside it); horizon_s: how far the search looked.
    """

    t_s: float
    within_span: bool
    span_s: float
    horizon_s: float
    continuation: ResidualContinuation | None


def free_running_time(
    residual_s: Callable[[np.ndarray], np.ndarray],
    clock: ClockModel,
    budget_s: float,
    k_sigma: float,
    span_s: float,
    period_s: float | None,
    horizon_s: float = FREE_RUNNING_HORIZON_S,
    n_scan: int = SCAN_POINTS,
) -> FreeRunningTime:
    """First time after a sync at which |deterministic| + k sigma reaches budget_s, past the span too.

    Inside [0, span_s] the exact residual is used (combined_max_free_running_s). If the budget
    is not reached there, the search goes on to horizon_s with the residual continued from its
    fitted line and orbital harmonics (continue_residual), the fit's misfit in the span added
    to the envelope as a margin. Planning estimate: past the span the orbit is assumed to keep
    the behaviour it showed within it (no manoeuvres, no unmodelled perturbation growth).
    """
    inside = combined_max_free_running_s(residual_s, clock, budget_s, k_sigma, span_s, n_scan)
    horizon = max(float(horizon_s), float(span_s))
    if np.isfinite(inside) or horizon <= span_s:
        return FreeRunningTime(float(inside), bool(np.isfinite(inside)), float(span_s), horizon, None)
    cont = continue_residual(residual_s, span_s, period_s)

    def excess(t):
        return combined_time_error(cont, clock, t, k_sigma).bound_s + cont.misfit_s - budget_s

    grid = np.geomspace(span_s, horizon, int(n_scan))
    t = first_crossing_s(excess, grid, None, xtol=1e-9, rtol=1e-12)
    return FreeRunningTime(float(t), False, float(span_s), horizon, cont)
