"""Synchronisation policies and the time error of a clock that is synchronised at contacts.

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

POLICY_KINDS = ("every_pass", "every_nth_pass", "min_duration", "min_elevation", "fixed_interval")
SYNC_POINTS = ("aos", "culmination", "los")

DEFAULT_MAX_GRID_POINTS = 50_000
MIN_GRID_STEP_S = 10.0


@dataclass(frozen=True)
class SyncPolicy:
    """Which contacts synchronise the clock.

    kind: "every_pass", "every_nth_pass" (``every_n``), "min_duration" (passes of at
    least ``min_duration_s``), "min_elevation" (culminating at least
    ``min_elevation_deg`` high) or "fixed_interval" (the first eligible contact once
    ``interval_s`` has run since the last sync). The duration and elevation filters
    apply to every kind. sync_at: the point of the pass where the sync happens.
    """

    kind: str = "every_pass"
    every_n: int = 1
    min_duration_s: float = 0.0
    min_elevation_deg: float | None = None
    interval_s: float | None = None
    sync_at: str = "culmination"

    def __post_init__(self):
        if self.kind not in POLICY_KINDS:
            raise ValueError(f"sync policy kind must be one of {POLICY_KINDS}")
        if self.sync_at not in SYNC_POINTS:
            raise ValueError(f"sync_at must be one of {SYNC_POINTS}")
        if self.every_n < 1:
            raise ValueError("every_n must be >= 1")
        if self.kind == "fixed_interval" and not (self.interval_s and self.interval_s > 0):
            raise ValueError("a fixed_interval policy needs interval_s > 0")


def contact_time_s(p, sync_at: str = "culmination") -> float:
    """The instant (TT s since span start) of pass ``p`` at which a sync is made."""
    return {"aos": p.aos_s, "culmination": p.culmination_s, "los": p.los_s}[sync_at]


def eligible_passes(passes, policy: SyncPolicy) -> list[int]:
    """Indices of the passes that pass the policy's duration and elevation filters."""
    out = []
    for i, p in enumerate(passes):
        if p.duration_s < policy.min_duration_s:
            continue
        if policy.min_elevation_deg is not None and p.max_elevation_deg < policy.min_elevation_deg:
            continue
        out.append(i)
    return out


def select_sync_passes(passes, policy: SyncPolicy) -> list[int]:
    """Indices (into ``passes``, in time order) of the passes at which the policy syncs."""
    cand = sorted(eligible_passes(passes, policy),
                  key=lambda i: contact_time_s(passes[i], policy.sync_at))
    if policy.kind == "every_nth_pass":
        return cand[policy.every_n - 1::policy.every_n]
    if policy.kind == "fixed_interval":
        chosen, last = [], 0.0
        for i in cand:
            t = contact_time_s(passes[i], policy.sync_at)
            if t - last >= policy.interval_s:
                chosen.append(i)
                last = t
        return chosen
    return cand


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


@dataclass
class GreedyPlan:
    """Sync times chosen by the greedy search, and whether they keep the envelope within budget.

    shortest_time_to_violation_s: over the runs the search planned (from the span start and from
    each chosen sync), the shortest time after which the envelope first exceeded the budget: a sync
    at least this often keeps it within budget on every run seen; None if it never exceeded it.
    """

    sync_times_s: np.ndarray
    candidate_indices: list[int]
    feasible: bool
    first_violation_s: float | None
    shortest_time_to_violation_s: float | None = None
    method: str = (
        "greedy: from each sync, the latest eligible contact before the k-sigma envelope first "
        "exceeds the budget; fewest syncs when the envelope grows with the time since sync, "
        "not guaranteed minimal otherwise"
    )


def greedy_syncs(candidate_times_s, span_s: float, err: ErrorModel, residual: Callable, k_sigma: float,
                 budget_s: float, grid_s=None) -> GreedyPlan:
    """Fewest syncs (greedy, see ``GreedyPlan.method``) among ``candidate_times_s`` that meet the budget.

    If no candidate bridges a gap, the search syncs at the first contact after the
    violation (to keep planning the rest) and reports ``feasible=False``.
    """
    cand = np.asarray(candidate_times_s, dtype=float)
    order = np.argsort(cand, kind="stable")
    cand_sorted = cand[order]
    t_all = simulation_grid(span_s, cand_sorted) if grid_s is None else np.unique(
        np.concatenate([grid_s, cand_sorted]))
    last, chosen, feasible, first_violation, shortest = 0.0, [], True, None, None
    while True:
        t = t_all[t_all > last]
        if t.size == 0:
            break
        det, sig = err(t - last, np.full_like(t, last))
        bound = np.abs(residual(t) - residual(np.array([last]))[0] + det) + k_sigma * np.asarray(sig)
        over = np.flatnonzero(bound > budget_s)
        if over.size == 0:
            break
        t_fail = t[over[0]]
        run_s = float(t_fail - last)
        shortest = run_s if shortest is None else min(shortest, run_s)
        ok = np.flatnonzero((cand_sorted > last) & (cand_sorted < t_fail))
        if ok.size:
            j = int(ok[-1])
        else:
            feasible = False
            if first_violation is None:
                first_violation = float(t_fail)
            later = np.flatnonzero(cand_sorted >= t_fail)
            if later.size == 0:
                break
            j = int(later[0])
        chosen.append(int(order[j]))
        last = float(cand_sorted[j])
    return GreedyPlan(np.array([cand[i] for i in chosen]), chosen, feasible, first_violation, shortest)


def largest_stride_meeting_budget(candidate_times_s, span_s, err, residual, k_sigma, budget_s,
                                  max_stride: int = 500, grid_s=None) -> int | None:
    """Largest N such that syncing at every Nth candidate (time order) meets the budget, or None."""
    cand = np.sort(np.asarray(candidate_times_s, dtype=float))
    best = None
    if cand.size == 0:
        return None
    grid = simulation_grid(span_s, cand) if grid_s is None else grid_s
    for n in range(1, min(max_stride, len(cand)) + 1):
        sim = simulate_syncs(cand[n - 1::n], span_s, err, residual, k_sigma, budget_s, grid)
        if sim.meets_budget:
            best = n
    return best
