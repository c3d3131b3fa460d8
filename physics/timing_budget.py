"""Combined time error of a clock in orbit: relativistic residual plus the oscillator's own error.

After a synchronisation at t = 0 the clock's time error (clock minus reference, s) is

    x(t) = r(t) + x0 + y0 t + D t^2 / 2 + stochastic part

with r(t) the relativistic offset left once the frequency preset (and, if the user
segment applies it, the eccentricity correction) is removed -- a callable such as
physics.budget.Budget.after_correction_s, evaluated exactly rather than interpolated --
and the clock terms as in physics.clock.time_error (quadratic clock model, ITU-R TF.538;
common practice). The planning envelope is |deterministic| + k sigma.

Planning estimates of a Gaussian model (see physics.clock.time_error for its limits).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .clock import ClockModel
from .clock.time_error import first_crossing_s

__all__ = ["CombinedTimeError", "combined_time_error", "combined_max_free_running_s"]

SCAN_POINTS = 4000
"""Log-spaced times scanned for the first budget crossing (as physics.clock.max_free_running_s)."""

SCAN_FIRST_S = 1e-3
"""First scanned time after the sync, s."""


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
