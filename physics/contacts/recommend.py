"""How often to sync: the fewest syncs inside the contact windows that keep the time error within budget.

Greedy search (``greedy_syncs``). From each sync (the span start first) the run's k-sigma
envelope (``physics.contacts.sync``, model there) is followed on the simulation grid until it
first exceeds the budget; the crossing is bracketed by the grid samples on either side and
narrowed on ``REFINE_SAMPLES`` samples between them. The next sync is the latest instant inside
an eligible contact window at which the envelope was still within budget: inside the window
when a station is in view at the crossing, else the LOS of the last window before it. A window
hours or days long (a geostationary satellite always in view) therefore holds as many syncs as
the clock needs, not one per pass. When no window lies between the sync and the crossing the
budget cannot be kept; the search then syncs at the first contact after the crossing, to plan
the rest, and reports the first such violation.

Work is bounded before it starts: the instants examined are the simulation grid (at most
``DEFAULT_MAX_GRID_POINTS`` plus the window edges and the policy's syncs), read in chunks from
each sync forward, plus ``REFINE_SAMPLES`` per run; the number of syncs is capped by the
caller's ``max_syncs``; window queries are vectorised over the windows (at most one per pass).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ..cancel import checkpoint
from .policy import fixed_interval_times_s
from .sync import ErrorModel, simulate_syncs, simulation_grid
from .windows import ContactWindows

REFINE_SAMPLES = 32
"""Samples between the last grid sample within budget and the first beyond it (so a sync inside a
window is placed to 1/32 of the grid step)."""

FIRST_CHUNK_SAMPLES = 256
"""Grid samples read first after a sync; the chunk then grows, or follows the previous run's length."""

INTERVAL_TRIES = (1.0, 0.9, 0.75, 0.5)
"""Fractions of the greedy plan's shortest run tried as a fixed interval, longest first."""

GREEDY_METHOD = (
    "greedy over the contact windows: from each sync, the latest instant inside an eligible window "
    "before the k-sigma envelope first exceeds the budget (syncs inside long passes included); fewest "
    "syncs when the envelope grows with the time since sync, not guaranteed minimal otherwise"
)


@dataclass
class GreedyPlan:
    """Sync times chosen by the greedy search, and whether they keep the envelope within budget.

    candidate_indices: for each sync, the candidate window (or instant) it falls in.
    shortest_time_to_violation_s: over the runs the search planned (from the span start and from
    each chosen sync), the shortest time after which the envelope first exceeded the budget: a sync
    at least this often keeps it within budget on every run seen; None if it never exceeded it.
    first_violation_s: the first crossing no window could prevent (None when feasible), after the
    sync at first_violation_after_sync_s; next_contact_s: the first instant in a window after that
    sync (None if none is left), at or after the crossing's bracket; violation_in_view: a station
    saw the satellite right after that sync but the envelope crossed before the search's time
    resolution (``time_resolution_s``) allowed another sync.
    stopped_at_s: the search stopped at ``max_syncs`` syncs, the last one at this time (None when it
    planned the whole span).
    """

    sync_times_s: np.ndarray
    candidate_indices: list[int]
    feasible: bool
    first_violation_s: float | None
    shortest_time_to_violation_s: float | None = None
    first_violation_after_sync_s: float | None = None
    violation_in_view: bool = False
    next_contact_s: float | None = None
    stopped_at_s: float | None = None
    time_resolution_s: float = 0.0
    method: str = GREEDY_METHOD


def _windows(candidates) -> ContactWindows:
    if isinstance(candidates, ContactWindows):
        return candidates
    return ContactWindows.from_instants(candidates)


class _Run:
    """The envelope of runs from successive syncs on a fixed grid: the residual is evaluated on the
    whole grid once, so a run reads it by slice; off-grid instants are evaluated when needed."""

    def __init__(self, t_all, err, residual, k_sigma, budget_s):
        self.t, self.err, self.residual, self.k, self.budget = t_all, err, residual, k_sigma, budget_s
        self.r = np.asarray(residual(t_all), dtype=float)

    def residual_at(self, t: float) -> float:
        j = int(np.searchsorted(self.t, t))
        if j < self.t.size and self.t[j] == t:
            return float(self.r[j])
        return float(self.residual(np.array([t]))[0])

    def excess(self, t_k: float, r_k: float, t, r) -> np.ndarray:
        """Envelope minus budget at ``t`` (residual ``r`` there) on the run from the sync ``t_k``."""
        det, sig = self.err(t - t_k, np.full_like(t, t_k))
        return np.abs(r - r_k + det) + self.k * np.broadcast_to(np.asarray(sig, dtype=float), t.shape) \
            - self.budget

    def first_crossing(self, t_k: float, r_k: float, chunk: int) -> tuple[int, int] | None:
        """Index of the first grid sample after ``t_k`` over budget, and how many samples that run
        spans; None if the envelope stays within budget to the span end."""
        p0 = p = int(np.searchsorted(self.t, t_k, side="right"))
        while p < self.t.size:
            over = np.flatnonzero(self.excess(t_k, r_k, self.t[p:p + chunk], self.r[p:p + chunk]) > 0.0)
            if over.size:
                return p + int(over[0]), p + int(over[0]) - p0 + 1
            p += chunk
            chunk *= 2
        return None

    def bracket(self, t_k: float, r_k: float, i: int, spanned: int) -> tuple[float, float, float]:
        """(last instant within budget, the residual there, first instant over it) of the run from
        ``t_k`` that crosses at grid sample ``i``: the grid samples themselves when the run spans
        more than ``REFINE_SAMPLES`` of them, else ``REFINE_SAMPLES`` samples between them."""
        lo, r_lo = t_k, r_k
        if i > 0 and self.t[i - 1] > t_k:
            lo, r_lo = float(self.t[i - 1]), float(self.r[i - 1])
        if spanned > REFINE_SAMPLES:
            return lo, r_lo, float(self.t[i])
        fine = lo + (float(self.t[i]) - lo) * np.arange(1, REFINE_SAMPLES + 1) / REFINE_SAMPLES
        r_fine = np.asarray(self.residual(fine), dtype=float)
        j = int(np.flatnonzero(self.excess(t_k, r_k, fine, r_fine) > 0.0)[0])
        return (float(fine[j - 1]), float(r_fine[j - 1]), float(fine[j])) if j else (lo, r_lo, float(fine[j]))


def greedy_syncs(candidates, span_s: float, err: ErrorModel, residual: Callable, k_sigma: float,
                 budget_s: float, grid_s=None, max_syncs: int | None = None) -> GreedyPlan:
    """Fewest syncs (greedy, module docstring) inside ``candidates`` that keep the envelope within
    ``budget_s`` over [0, span_s].

    candidates: a ``ContactWindows`` (a sync anywhere inside a window), or contact instants (TT s
    since span start; each a window of zero length). ``grid_s``: the simulation grid (default
    ``simulation_grid``); window edges are added to it. ``max_syncs``: stop after this many syncs.
    """
    windows = _windows(candidates)
    edges = windows.edges_s()
    edges = edges[(edges >= 0.0) & (edges <= span_s)]
    t_all = simulation_grid(span_s, edges) if grid_s is None else np.unique(
        np.concatenate([np.asarray(grid_s, dtype=float), edges]))
    resolution = float(np.max(np.diff(t_all))) / REFINE_SAMPLES if t_all.size > 1 else 0.0
    runs = _Run(t_all, err, residual, k_sigma, budget_s)

    last, times, chosen = 0.0, [], []
    r_last = runs.residual_at(0.0)
    feasible, first_violation, violation_after, in_view, stopped = True, None, None, False, None
    next_contact = None
    shortest: tuple[float, float, float, float] | None = None  # (run, sync, last within, first beyond)
    chunk = FIRST_CHUNK_SAMPLES
    while True:
        checkpoint()
        found = runs.first_crossing(last, r_last, chunk)
        if found is None:
            break
        i, spanned = found
        chunk = max(16, 2 * spanned)  # the next run is about as long as this one
        t_ok, r_ok, t_fail = runs.bracket(last, r_last, i, spanned)
        if shortest is None or t_fail - last < shortest[0]:
            shortest = (t_fail - last, last, t_ok, t_fail)
        hit = windows.latest_within(last, t_ok)
        if hit is None:
            if feasible:
                feasible, first_violation, violation_after = False, t_fail, last
                after = np.nextafter(last, math.inf)
                nxt = windows.earliest_from(after)
                next_contact = None if nxt is None else nxt[0]
                in_view = next_contact == after  # a station saw it right after the sync
            hit = windows.earliest_from(t_fail)
            if hit is None:
                break
        if max_syncs is not None and len(times) >= max_syncs:
            stopped = last
            break
        times.append(hit[0])
        chosen.append(hit[1])
        last, r_last = hit[0], (r_ok if hit[0] == t_ok else runs.residual_at(hit[0]))

    run = None
    if shortest is not None:
        run, t_k, t_ok, t_fail = shortest
        r_k = runs.residual_at(t_k)

        def f(t):
            x = np.array([t])
            return float(runs.excess(t_k, r_k, x, residual(x))[0])

        if t_ok > t_k and f(t_ok) <= 0.0:
            run = brentq(f, t_ok, t_fail, xtol=1e-6, rtol=1e-12) - t_k
    return GreedyPlan(np.array(times, dtype=float), chosen, feasible, first_violation, run, violation_after,
                      in_view, next_contact, stopped, resolution)


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


def _round_down_s(t_s: float) -> float:
    """An interval an operator would write: whole minutes from 10 minutes on, else whole seconds."""
    return math.floor(t_s / 60.0) * 60.0 if t_s >= 600.0 else float(math.floor(t_s))


def fixed_interval_meeting_budget(windows: ContactWindows, span_s: float, err: ErrorModel, residual: Callable,
                                  k_sigma: float, budget_s: float, longest_s: float, grid_s=None,
                                  max_syncs: int | None = None) -> float | None:
    """The longest of a few round intervals (``INTERVAL_TRIES`` of ``longest_s``) with which a
    fixed-interval policy over ``windows`` keeps the envelope within budget, checked by simulation;
    None if none does. Intervals that would need more than ``max_syncs`` syncs are not tried."""
    tried = set()
    for fraction in INTERVAL_TRIES:
        interval = _round_down_s(fraction * longest_s)
        if interval <= 0.0 or interval in tried:
            continue
        tried.add(interval)
        if max_syncs is not None and span_s / interval > max_syncs:
            break
        times = fixed_interval_times_s(windows, interval)
        if simulate_syncs(times, span_s, err, residual, k_sigma, budget_s, grid_s).meets_budget:
            return interval
    return None
