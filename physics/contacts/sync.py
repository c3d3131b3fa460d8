"""The time error of a clock that is synchronised at contacts, between and across syncs.

Model (planning estimate). The clock is synchronised at the span start and at
each chosen contact; a synchronisation resets the time offset to zero and,
when the policy re-estimates frequency, resets the fractional frequency
offset to the user's residual. Between syncs, at tau = t - t_k after the last
sync t_k, the time error is

    x(t) = [r(t) - r(t_k)] + x_det(tau; t_k),   1-sigma s(tau; t_k),

with r the relativistic offset left after the frequency preset (the budget's
``after_preset_s``, or another variant chosen by the caller) and
``err(tau, t_k) -> (x_det, s)`` the oscillator's own error model. The planning
envelope is |x| + k s (physics.clock.time_error); the noise is taken to
restart at each sync, the usual "time error after t since synchronisation"
reading of a power-law model (an approximation for flicker and random-walk FM,
whose frequency wander a time-only sync does not remove).

The error just before a sync is the left limit at the sync instant. The worst
error is the maximum of the envelope on a uniform grid plus every sync
instant; the worst gap includes the run from the last sync to the span end.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..clock.time_error import SECONDS_PER_DAY, time_error_sigma_s

ErrorModel = Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]
"""err(t_since_sync_s, sync_time_s) -> (deterministic_s, sigma_s), vectorised, broadcasting."""

DEFAULT_MAX_GRID_POINTS = 50_000
MIN_GRID_STEP_S = 10.0


def clock_error_model(h_alpha: dict, drift_per_day: float = 0.0, initial_fractional_frequency: float = 0.0,
                      initial_time_offset_s: float = 0.0, f_h_hz: float | None = None,
                      reestimate_frequency: bool = False,
                      frequency_residual_fractional: float = 0.0) -> ErrorModel:
    """An ``ErrorModel`` from a power-law clock (physics.clock.time_error).

    Deterministic part x0 + y_k tau + D tau^2/2, where x0 = initial_time_offset_s
    for the run from the span start and 0 after a sync; y_k is the clock's
    frequency offset when the run starts: y0 + D t_k without frequency
    re-estimation, the residual when a sync re-estimates frequency (y0 on the
    first run). sigma: time_error_sigma_s(tau).
    """
    drift_per_s = float(drift_per_day) / SECONDS_PER_DAY
    y0, x0 = float(initial_fractional_frequency), float(initial_time_offset_s)
    y_res = float(frequency_residual_fractional)

    def err(tau_s, t_sync_s):
        tau = np.asarray(tau_s, dtype=float)
        t_k = np.broadcast_to(np.asarray(t_sync_s, dtype=float), tau.shape)
        first = t_k <= 0.0
        y_k = np.where(first, y0, y_res if reestimate_frequency else y0 + drift_per_s * t_k)
        det = np.where(first, x0, 0.0) + y_k * tau + 0.5 * drift_per_s * tau**2
        return det, time_error_sigma_s(tau, h_alpha, f_h_hz)

    return err


@dataclass
class SyncSimulation:
    """Simulated time error (s) under a list of sync times; arrays over the grid ``t_s``."""

    sync_times_s: np.ndarray
    error_before_sync_s: np.ndarray
    sigma_before_sync_s: np.ndarray
    bound_before_sync_s: np.ndarray
    bound_after_sync_s: np.ndarray
    t_s: np.ndarray
    error_s: np.ndarray
    sigma_s: np.ndarray
    bound_s: np.ndarray
    worst_bound_s: float
    worst_bound_time_s: float
    worst_gap_s: float
    meets_budget: bool
    k_sigma: float
    budget_s: float


def simulation_grid(span_s: float, extra_s=(), max_points: int = DEFAULT_MAX_GRID_POINTS) -> np.ndarray:
    """Uniform grid over [0, span_s] (at most ``max_points``, step >= 10 s) merged with ``extra_s``."""
    step = max(MIN_GRID_STEP_S, span_s / max_points)
    grid = np.append(np.arange(0.0, span_s, step), span_s)
    return np.unique(np.concatenate([grid, np.asarray(extra_s, dtype=float)]))


def _error_at(t, syncs, err, residual, side="left"):
    """Error pieces at times t given sorted sync times (0 prepended by the caller)."""
    idx = np.searchsorted(syncs, t, side=side) - 1
    idx = np.clip(idx, 0, len(syncs) - 1)
    t_k = syncs[idx]
    det_clock, sigma = err(t - t_k, t_k)
    det = residual(t) - residual(t_k) + det_clock
    return np.array(det, dtype=float), np.array(np.broadcast_to(sigma, det.shape), dtype=float)


def simulate_syncs(sync_times_s, span_s: float, err: ErrorModel, residual: Callable, k_sigma: float,
                   budget_s: float, grid_s=None) -> SyncSimulation:
    """Time error of a clock synced at ``sync_times_s`` (TT s since span start) over [0, span_s].

    The per-sync arrays of the result follow the sorted sync times.

    ``residual(t_s) -> s``: relativistic offset after preset (vectorised); ``err``:
    ErrorModel; ``budget_s``: allowed |error| for the k-sigma envelope. Model:
    module docstring.
    """
    syncs = np.sort(np.asarray(sync_times_s, dtype=float))
    if syncs.size and (syncs[0] < 0.0 or syncs[-1] > span_s):
        raise ValueError("sync times must lie inside [0, span_s]")
    all_syncs = np.concatenate([[0.0], syncs])
    t = simulation_grid(span_s, syncs) if grid_s is None else np.unique(np.concatenate([grid_s, syncs]))
    # Left limit: a sample exactly at a sync instant belongs to the run before it.
    det, sig = _error_at(t, all_syncs, err, residual, side="left")
    d0, s0 = _error_at(np.array([0.0]), all_syncs, err, residual, side="right")
    det[0], sig[0] = d0[0], s0[0]
    bound = np.abs(det) + k_sigma * sig
    pre_det, pre_sig = _error_at(syncs, all_syncs, err, residual, side="left")
    post_det, post_sig = _error_at(syncs, all_syncs, err, residual, side="right")
    i = int(np.nanargmax(bound))
    gaps = np.diff(np.concatenate([all_syncs, [span_s]]))
    return SyncSimulation(
        sync_times_s=syncs, error_before_sync_s=pre_det, sigma_before_sync_s=pre_sig,
        bound_before_sync_s=np.abs(pre_det) + k_sigma * pre_sig,
        bound_after_sync_s=np.abs(post_det) + k_sigma * post_sig,
        t_s=t, error_s=det, sigma_s=sig, bound_s=bound,
        worst_bound_s=float(bound[i]), worst_bound_time_s=float(t[i]),
        worst_gap_s=float(gaps.max()), meets_budget=bool(np.all(bound <= budget_s)),
        k_sigma=float(k_sigma), budget_s=float(budget_s),
    )


def error_under_syncs(t_s, sync_times_s, err: ErrorModel, residual: Callable, k_sigma: float):
    """Time error (s) at ``t_s`` of a clock synced at ``sync_times_s`` (the span start is a sync).

    Returns (deterministic, 1-sigma, |deterministic| + k sigma), each shaped like ``t_s``; a time
    exactly at a sync belongs to the run before it (the error the sync removes). Model: module
    docstring.
    """
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    if t.size == 0:
        return t, t, t
    syncs = np.concatenate([[0.0], np.sort(np.asarray(sync_times_s, dtype=float))])
    det, sig = _error_at(t, syncs, err, residual, side="left")
    at_start = t <= 0.0
    if at_start.any():
        det[at_start], sig[at_start] = _error_at(t[at_start], syncs, err, residual, side="right")
    return det, sig, np.abs(det) + k_sigma * sig


def run_envelope_s(t_s, t_sync_s: float, err: ErrorModel, residual: Callable, k_sigma: float) -> np.ndarray:
    """|error| + k sigma (s) at ``t_s`` (> t_sync_s) of one run starting at the sync ``t_sync_s``
    (the span start, t_sync_s = 0, carries the clock's initial offsets). Model: module docstring."""
    t = np.asarray(t_s, dtype=float)
    det, sig = err(t - t_sync_s, np.full_like(t, t_sync_s))
    drift = residual(t) - residual(np.array([t_sync_s]))[0]
    return np.abs(drift + det) + k_sigma * np.broadcast_to(np.asarray(sig, dtype=float), t.shape)
