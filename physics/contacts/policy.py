"""Synchronisation policies: which contacts synchronise the clock, and when.

A pass is a contact window [AOS, LOS] (``physics.contacts.windows``). Two families of policy:

- per pass ("every_pass", "every_nth_pass", "min_duration", "min_elevation"): one sync in each
  chosen eligible pass, at its ``sync_at`` point (AOS, culmination or LOS);
- "fixed_interval": a sync once ``interval_s`` has run since the last sync (the span start is
  one), at that instant if an eligible station is in view then, else at the first eligible
  contact after it, the AOS of the next eligible window. A long window (a geostationary
  satellite in view for days) thus holds a sync every ``interval_s``.

The duration and elevation filters apply to every kind: a pass that fails them is no window.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .windows import ContactWindows

POLICY_KINDS = ("every_pass", "every_nth_pass", "min_duration", "min_elevation", "fixed_interval")
PER_PASS_KINDS = POLICY_KINDS[:4]
SYNC_POINTS = ("aos", "culmination", "los")


@dataclass(frozen=True)
class SyncPolicy:
    """Which contacts synchronise the clock.

    kind: "every_pass", "every_nth_pass" (``every_n``), "min_duration" (passes of at
    least ``min_duration_s``), "min_elevation" (culminating at least
    ``min_elevation_deg`` high) or "fixed_interval" (the first eligible contact once
    ``interval_s`` has run since the last sync: module docstring). The duration and
    elevation filters apply to every kind. sync_at: the point of the pass where a
    per-pass kind syncs (a fixed_interval sync happens when its interval has run).
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


@dataclass(frozen=True)
class SyncSchedule:
    """A policy's syncs in time order: instants (TT s since the span start) and, for each, the
    pass (index into the pass list) whose station makes it."""

    times_s: np.ndarray
    pass_indices: np.ndarray


def contact_time_s(p, sync_at: str = "culmination") -> float:
    """The instant (TT s since span start) of pass ``p`` at which a per-pass sync is made."""
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


def eligible_windows(passes, policy: SyncPolicy) -> ContactWindows:
    """The contact windows [AOS, LOS] of the passes the policy may sync in."""
    return ContactWindows.from_passes(passes, eligible_passes(passes, policy))


def fixed_interval_times_s(windows: ContactWindows, interval_s: float) -> np.ndarray:
    """Sync instants of a fixed-interval policy over ``windows`` (module docstring), sorted.

    Vectorised per merged window: inside one, the syncs are the due instant (or its AOS) and
    every ``interval_s`` after it up to its end. At most span / interval_s + 1 instants.
    """
    if not interval_s > 0.0:
        raise ValueError("interval_s must be > 0")
    starts, ends = windows.union()
    out: list[np.ndarray] = []
    due = float(interval_s)
    while True:
        j = int(np.searchsorted(ends, due, side="left"))  # first merged window still open at `due`
        if j == len(starts):
            break
        first = max(due, float(starts[j]))
        n = int(np.floor((ends[j] - first) / interval_s)) + 1
        times = first + interval_s * np.arange(n + 1)
        times = times[times <= ends[j]]
        out.append(times)
        due = float(times[-1]) + interval_s
    return np.concatenate(out) if out else np.empty(0)


def schedule_syncs(passes, policy: SyncPolicy) -> SyncSchedule:
    """The policy's syncs over ``passes``, in time order, each with the pass that makes it."""
    if policy.kind == "fixed_interval":
        windows = eligible_windows(passes, policy)
        times = fixed_interval_times_s(windows, float(policy.interval_s))
        return SyncSchedule(times, windows.pass_index[windows.in_view(times)])
    cand = sorted(eligible_passes(passes, policy), key=lambda i: contact_time_s(passes[i], policy.sync_at))
    if policy.kind == "every_nth_pass":
        cand = cand[policy.every_n - 1::policy.every_n]
    return SyncSchedule(np.array([contact_time_s(passes[i], policy.sync_at) for i in cand], dtype=float),
                        np.array(cand, dtype=int))


def select_sync_passes(passes, policy: SyncPolicy) -> list[int]:
    """Indices of the passes in which the policy syncs, in the time order of their first sync
    (a fixed-interval policy may sync several times in one pass: ``schedule_syncs`` lists them)."""
    chosen = schedule_syncs(passes, policy).pass_indices.tolist()
    return list(dict.fromkeys(chosen))
