"""The greedy plan over contact windows: syncs inside long windows, against closed forms.

Outside truth: a clock with linear frequency ageing D whose syncs re-estimate frequency has the time
error D tau^2 / 2 after tau since a sync (quadratic clock model, ITU-R TF.538; common practice), so
it reaches the budget B after reach = sqrt(2 B / D). For white FM alone the 1-sigma time error is
sqrt(h0 tau / 2) (NIST SP 1065, sigma_y^2 = h0 / (2 tau), times tau^2), reaching B at k sigma after
2 B^2 / (k^2 h0).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from taubudget.physics.contacts import (
    ContactWindows,
    clock_error_model,
    fixed_interval_meeting_budget,
    fixed_interval_times_s,
    greedy_syncs,
    simulate_syncs,
    simulation_grid,
)

HOUR_S = 3600.0
SPAN_S = 48 * HOUR_S
DRIFT_PER_DAY = 1e-11
DRIFT_PER_S = DRIFT_PER_DAY / 86_400.0
BUDGET_S = 1e-7
REACH_S = math.sqrt(2 * BUDGET_S / DRIFT_PER_S)  # 41,569 s = 11.5 h
ROOT_S = 1e-3
"""The reported run is refined with brentq to 1e-6 s; a millisecond leaves margin."""


def _no_residual(t):
    return np.zeros_like(np.asarray(t, dtype=float))


def _ageing():
    return clock_error_model({}, DRIFT_PER_DAY, reestimate_frequency=True)


def _window(a_s, b_s):
    return ContactWindows(np.array([a_s]), np.array([b_s]), np.array([0]))


def test_a_window_over_the_whole_span_holds_a_sync_every_reach():
    grid = simulation_grid(SPAN_S)
    step = float(np.max(np.diff(grid)))
    plan = greedy_syncs(_window(0.0, SPAN_S), SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S)
    assert plan.feasible and plan.stopped_at_s is None
    assert plan.shortest_time_to_violation_s == pytest.approx(REACH_S, abs=ROOT_S)
    gaps = np.diff(np.concatenate([[0.0], plan.sync_times_s]))
    # each sync at the last instant still within budget, to the grid step (runs span > 32 samples)
    assert np.all(gaps <= REACH_S) and np.all(gaps > REACH_S - step)
    assert len(plan.sync_times_s) == math.ceil(SPAN_S / REACH_S) - 1  # 4: fewest possible
    assert simulate_syncs(plan.sync_times_s, SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S).meets_budget


def test_one_contact_per_pass_cannot_do_what_the_window_can():
    # The same window seen as one instant (its culmination): the greedy plan runs out of contacts.
    plan = greedy_syncs(np.array([SPAN_S / 2]), SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S)
    assert not plan.feasible and not plan.violation_in_view
    assert plan.first_violation_s == pytest.approx(REACH_S, abs=simulation_grid(SPAN_S)[1])
    assert plan.first_violation_after_sync_s == 0.0 and plan.next_contact_s == SPAN_S / 2


def test_a_gap_longer_than_the_reach_is_reported_with_the_sync_before_it():
    windows = ContactWindows(np.array([0.0, 30 * HOUR_S]), np.array([10 * HOUR_S, SPAN_S]), np.array([0, 1]))
    reach = 4 * HOUR_S
    budget = 0.5 * DRIFT_PER_S * reach**2
    plan = greedy_syncs(windows, SPAN_S, _ageing(), _no_residual, 3.0, budget)
    assert not plan.feasible
    # syncs every reach in the first window, the last at its LOS; the run from there crosses in the gap
    assert plan.first_violation_after_sync_s == 10 * HOUR_S
    assert plan.first_violation_s == pytest.approx(14 * HOUR_S, abs=simulation_grid(SPAN_S)[1])
    assert plan.next_contact_s == 30 * HOUR_S
    assert 10 * HOUR_S in plan.sync_times_s.tolist() and 30 * HOUR_S in plan.sync_times_s.tolist()
    assert plan.candidate_indices[plan.sync_times_s.tolist().index(30 * HOUR_S)] == 1


def test_a_clock_that_crosses_within_the_resolution_while_in_view():
    h0, k = 2e-20, 3.0
    run = 0.1  # s: far below the 10 s grid step / 32
    budget = k * math.sqrt(h0 * run / 2)  # white FM: k sqrt(h0 tau / 2) = B at tau = run
    err = clock_error_model({0: h0})
    plan = greedy_syncs(_window(0.0, SPAN_S), SPAN_S, err, _no_residual, k, budget, max_syncs=5)
    assert not plan.feasible and plan.violation_in_view
    assert plan.shortest_time_to_violation_s < plan.time_resolution_s


def test_white_fm_run_is_the_closed_form():
    h0, k = 2e-24, 3.0  # ADEV 1e-12 at 1 s
    budget = 2e-10
    expected = 2 * budget**2 / (k**2 * h0)  # NIST SP 1065 white FM, tau sigma_y(tau) = B / k
    plan = greedy_syncs(_window(0.0, SPAN_S), SPAN_S, clock_error_model({0: h0}), _no_residual, k, budget)
    assert plan.feasible and len(plan.sync_times_s) == math.floor(SPAN_S / expected)  # 4444 s runs
    assert plan.shortest_time_to_violation_s == pytest.approx(expected, abs=ROOT_S)


def test_the_search_stops_at_max_syncs():
    plan = greedy_syncs(_window(0.0, SPAN_S), SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S / 100,
                        max_syncs=7)
    assert len(plan.sync_times_s) == 7 and plan.stopped_at_s == plan.sync_times_s[-1]


def test_fixed_interval_found_meets_the_budget_and_none_when_a_gap_is_too_long():
    windows = _window(0.0, SPAN_S)
    interval = fixed_interval_meeting_budget(windows, SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S, REACH_S)
    assert interval is not None and interval <= REACH_S and interval % 60.0 == 0.0
    times = fixed_interval_times_s(windows, interval)
    assert np.allclose(np.diff(np.concatenate([[0.0], times])), interval)
    gap = ContactWindows(np.array([0.0, 30 * HOUR_S]), np.array([10 * HOUR_S, SPAN_S]), np.array([0, 1]))
    assert fixed_interval_meeting_budget(gap, SPAN_S, _ageing(), _no_residual, 3.0, BUDGET_S, REACH_S) is None


window_lists = st.lists(st.tuples(st.floats(0.0, SPAN_S), st.floats(0.0, 20 * HOUR_S)), min_size=1,
                        max_size=8)


@settings(max_examples=30, deadline=None)
@given(ws=window_lists, budget_ns=st.floats(5.0, 500.0), h0=st.floats(0.0, 1e-23), reest=st.booleans())
def test_a_feasible_plan_meets_the_budget_with_every_sync_inside_a_window(ws, budget_ns, h0, reest):
    start = np.array([a for a, _ in ws])
    end = np.minimum(start + np.array([d for _, d in ws]), SPAN_S)
    windows = ContactWindows(start, end, np.arange(len(ws)))
    err = clock_error_model({0: h0}, DRIFT_PER_DAY, reestimate_frequency=reest)
    residual = lambda t: 3e-9 * np.sin(2 * math.pi * np.asarray(t, dtype=float) / 43_082.0)  # noqa: E731
    plan = greedy_syncs(windows, SPAN_S, err, residual, 3.0, budget_ns * 1e-9)
    for t, i in zip(plan.sync_times_s, plan.candidate_indices, strict=True):
        assert windows.start_s[i] <= t <= windows.end_s[i]
    assert np.all(np.diff(plan.sync_times_s) > 0)
    if plan.feasible:
        sim = simulate_syncs(plan.sync_times_s, SPAN_S, err, residual, 3.0, budget_ns * 1e-9)
        assert sim.meets_budget
    else:
        # no window is open between the sync before the violation and the grid sample before it
        after, t_fail = plan.first_violation_after_sync_s, plan.first_violation_s
        step = float(np.max(np.diff(simulation_grid(SPAN_S))))
        assert after < t_fail
        assert plan.violation_in_view or not any(
            a <= t_fail - step and b > after for a, b in zip(windows.start_s, windows.end_s, strict=True))
