"""Contact windows: coverage queries against brute-force answers over the same windows.

Outside truth: the definitions themselves, evaluated by plain loops over the windows and over the
only instants where an answer can lie (a query's own bounds and the window edges).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from taubudget.physics.contacts import ContactWindows, Pass


def _windows(ws) -> ContactWindows:
    start = np.array([a for a, _ in ws], dtype=float)
    return ContactWindows(start, start + np.array([d for _, d in ws], dtype=float), np.arange(len(ws)))


windows_st = st.lists(st.tuples(st.integers(0, 200), st.integers(0, 60)), max_size=12).map(_windows)


def _covered(w: ContactWindows, t: float) -> list[int]:
    return [i for i in range(len(w)) if w.start_s[i] <= t <= w.end_s[i]]


def _longest_in_view(w: ContactWindows, t: float) -> int:
    cover = _covered(w, t)
    return max(cover, key=lambda i: (w.end_s[i], -i)) if cover else -1


@settings(max_examples=200, deadline=None)
@given(w=windows_st, a=st.integers(-5, 270), width=st.integers(0, 80))
def test_latest_within_is_the_latest_covered_instant(w, a, width):
    after, up_to = float(a), float(a + width)
    # The answer is up_to itself or a window end inside (after, up_to): nothing else can be latest.
    points = [t for t in [up_to, *w.end_s] if after < t <= up_to and _covered(w, t)]
    got = w.latest_within(after, up_to)
    if not points:
        assert got is None
        return
    t, i = got
    assert t == max(points)
    assert w.start_s[i] <= t <= w.end_s[i] and w.end_s[i] == max(w.end_s[j] for j in _covered(w, t))


@settings(max_examples=200, deadline=None)
@given(w=windows_st, t=st.integers(-5, 270))
def test_earliest_from_is_the_earliest_covered_instant(w, t):
    points = [x for x in [float(t), *w.start_s] if x >= t and _covered(w, x)]
    got = w.earliest_from(float(t))
    if not points:
        assert got is None
        return
    assert got[0] == min(points)
    assert w.start_s[got[1]] <= got[0] <= w.end_s[got[1]]


@settings(max_examples=100, deadline=None)
@given(w=windows_st, ts=st.lists(st.floats(-5.0, 270.0), max_size=20))
def test_in_view_names_the_window_staying_longest(w, ts):
    got = w.in_view(np.array(ts))
    for t, i in zip(ts, got, strict=True):
        expected = _longest_in_view(w, t)
        assert (i == -1) == (expected == -1)
        if i >= 0:
            assert w.end_s[i] == w.end_s[expected] and w.start_s[i] <= t <= w.end_s[i]


@settings(max_examples=200, deadline=None)
@given(w=windows_st)
def test_union_covers_what_the_windows_cover(w):
    starts, ends = w.union()
    assert np.all(starts[1:] > ends[:-1])  # disjoint, sorted, touching windows merged
    edges = w.edges_s()
    probes = np.concatenate([edges, edges + 0.5, edges - 0.5]) if len(w) else np.array([0.0])
    for t in probes:
        assert bool(_covered(w, t)) == bool(np.any((starts <= t) & (t <= ends)))


def test_windows_from_passes_and_instants():
    passes = [Pass("A", 0, 10.0, 70.0, 40.0, 30.0), Pass("B", 1, 50.0, 200.0, 120.0, 60.0)]
    w = ContactWindows.from_passes(passes, [1])
    assert w.start_s.tolist() == [50.0] and w.end_s.tolist() == [200.0] and w.pass_index.tolist() == [1]
    both = ContactWindows.from_passes(passes)
    assert both.in_view(np.array([60.0, 5.0])).tolist() == [1, -1]  # B stays in view longer than A
    inst = ContactWindows.from_instants([30.0, 10.0])
    assert inst.latest_within(0.0, 25.0) == (10.0, 1) and inst.earliest_from(11.0) == (30.0, 0)
    with pytest.raises(ValueError, match="end before"):
        ContactWindows(np.array([2.0]), np.array([1.0]), np.array([0]))
