"""Contact windows: the intervals in which a station may synchronise the clock.

A pass is a window [AOS, LOS] (TT seconds since the span start): its station sees the satellite,
and can sync it, at any instant inside it. Windows of different stations may overlap (a
geostationary satellite in view of two stations for the whole span is two windows covering the
span). A contact that happens at one instant only is a window of zero length
(``ContactWindows.from_instants``).

Where several windows cover an instant, the one that stays in view longest (the latest LOS)
is the one named for it: common practice for picking the station that syncs, since it leaves
the most time to repeat a failed sync. All queries are vectorised over the windows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

_CHUNK_ELEMENTS = 4_000_000
"""Largest (instants x windows) block evaluated at once by ``in_view`` (memory bound)."""


@dataclass(frozen=True)
class ContactWindows:
    """Intervals [start_s, end_s] (TT s since the span start) in which a sync can be made.

    pass_index: the pass (index into the caller's pass list) each window is, or -1 for a bare
    instant. Windows need not be sorted or disjoint; the arrays have one entry per window.
    """

    start_s: np.ndarray
    end_s: np.ndarray
    pass_index: np.ndarray

    def __post_init__(self):
        if not (self.start_s.shape == self.end_s.shape == self.pass_index.shape) or self.start_s.ndim != 1:
            raise ValueError("window starts, ends and pass indices need equal 1-D shapes")
        if np.any(self.end_s < self.start_s):
            raise ValueError("a window cannot end before it starts")

    @classmethod
    def from_passes(cls, passes, indices=None) -> ContactWindows:
        """The windows [AOS, LOS] of ``passes`` (``physics.contacts.Pass``), or of those listed in
        ``indices``."""
        idx = list(range(len(passes))) if indices is None else list(indices)
        return cls(np.array([passes[i].aos_s for i in idx], dtype=float),
                   np.array([passes[i].los_s for i in idx], dtype=float),
                   np.array(idx, dtype=int))

    @classmethod
    def from_instants(cls, t_s) -> ContactWindows:
        """Zero-length windows, one per instant, in the order given (window i is instant i)."""
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        return cls(t.copy(), t.copy(), np.full(t.shape, -1, dtype=int))

    def __len__(self) -> int:
        return int(self.start_s.size)

    def edges_s(self) -> np.ndarray:
        """Every window start and end, sorted, without repeats."""
        return np.unique(np.concatenate([self.start_s, self.end_s]))

    def union(self) -> tuple[np.ndarray, np.ndarray]:
        """The windows merged into disjoint intervals: (starts, ends), sorted. Windows that touch
        (one starts where another ends) merge."""
        if len(self) == 0:
            return np.empty(0), np.empty(0)
        order = np.argsort(self.start_s, kind="stable")
        start, end = self.start_s[order], self.end_s[order]
        reach = np.maximum.accumulate(end)
        new = np.concatenate([[True], start[1:] > reach[:-1]])
        first = np.flatnonzero(new)
        last = np.concatenate([first[1:] - 1, [len(start) - 1]])
        return start[first], reach[last]

    def in_view(self, t_s) -> np.ndarray:
        """For each instant, the window covering it that stays in view longest, or -1 (int array)."""
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        out = np.full(t.shape, -1, dtype=int)
        if len(self) == 0 or t.size == 0:
            return out
        step = max(1, _CHUNK_ELEMENTS // len(self))
        for lo in range(0, t.size, step):
            block = t[lo:lo + step, None]
            cover = (self.start_s <= block) & (block <= self.end_s)
            best = np.argmax(np.where(cover, self.end_s, -np.inf), axis=1)
            out[lo:lo + step] = np.where(cover.any(axis=1), best, -1)
        return out

    def latest_within(self, after_s: float, up_to_s: float) -> tuple[float, int] | None:
        """The latest instant t with after_s < t <= up_to_s inside a window, and that window
        (the one staying in view longest where several cover t); None if there is none."""
        if len(self) == 0:
            return None
        t = np.minimum(self.end_s, up_to_s)
        ok = (self.start_s <= up_to_s) & (t > after_s)
        if not ok.any():
            return None
        best = t[ok].max()
        tied = np.flatnonzero(ok & (t == best))
        return float(best), int(tied[np.argmax(self.end_s[tied])])

    def earliest_from(self, t_s: float) -> tuple[float, int] | None:
        """The earliest instant at or after ``t_s`` inside a window, and that window; None if none."""
        if len(self) == 0:
            return None
        covering = (self.start_s <= t_s) & (t_s <= self.end_s)
        if covering.any():
            i = np.flatnonzero(covering)
            return float(t_s), int(i[np.argmax(self.end_s[i])])
        later = np.flatnonzero(self.start_s > t_s)
        if later.size == 0:
            return None
        first = self.start_s[later].min()
        tied = later[self.start_s[later] == first]
        return float(first), int(tied[np.argmax(self.end_s[tied])])
