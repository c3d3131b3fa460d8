"""How often to sync: the greedy plan's shortest run to a violation, against a closed form.

Outside truth: a clock with linear frequency ageing D and no noise, synced (time reset, frequency
not re-estimated) at t_k, has the time error D t_k tau + D tau^2 / 2 after tau (quadratic clock
model, ITU-R TF.538; common practice). It reaches the budget B after
tau(t_k) = -t_k + sqrt(t_k^2 + 2 B / D): the later the sync, the shorter the run.
"""

import math

import numpy as np
import pytest
from taubudget.physics.contacts import error_under_syncs, greedy_syncs

DRIFT_PER_S = 1e-13 / 86_400.0  # invented ageing: 1e-13 per day
BUDGET_S = 10e-9
SPAN_S = 10 * 86_400.0
CANDIDATE_STEP_S = 60.0  # a contact every minute: the plan can sync almost where it wants


def _err(tau_s, t_sync_s):
    tau, tk = np.asarray(tau_s, dtype=float), np.asarray(t_sync_s, dtype=float)
    return DRIFT_PER_S * (tk * tau + 0.5 * tau**2), np.zeros_like(tau)


def _no_residual(t):
    return np.zeros_like(np.asarray(t, dtype=float))


def _tau_closed_form_s(t_k):
    return -t_k + math.sqrt(t_k**2 + 2.0 * BUDGET_S / DRIFT_PER_S)


def test_shortest_run_is_the_closed_form_after_the_last_sync():
    cand = np.arange(CANDIDATE_STEP_S, SPAN_S, CANDIDATE_STEP_S)
    plan = greedy_syncs(cand, SPAN_S, _err, _no_residual, 3.0, BUDGET_S)
    assert plan.feasible
    last = float(plan.sync_times_s[-1])
    expected = _tau_closed_form_s(last)
    if last + expected < SPAN_S:  # the last run also reaches the budget inside the span
        assert plan.shortest_time_to_violation_s == pytest.approx(expected, abs=2 * CANDIDATE_STEP_S)
    else:
        previous = float(plan.sync_times_s[-2])
        assert plan.shortest_time_to_violation_s == pytest.approx(_tau_closed_form_s(previous),
                                                                  abs=2 * CANDIDATE_STEP_S)
    # the first run (from the span start) is the longest: sqrt(2 B / D)
    assert plan.shortest_time_to_violation_s < math.sqrt(2.0 * BUDGET_S / DRIFT_PER_S)


def test_no_violation_leaves_no_interval():
    plan = greedy_syncs(np.array([3600.0]), 7200.0, _err, _no_residual, 3.0, 1.0)
    assert plan.shortest_time_to_violation_s is None and plan.feasible


def test_error_under_syncs_restarts_at_each_sync():
    syncs = np.array([86_400.0, 2 * 86_400.0])
    t = np.array([0.0, 43_200.0, 86_400.0, 86_400.0 + 3600.0])
    det, sig, bound = error_under_syncs(t, syncs, _err, _no_residual, 3.0)
    d = DRIFT_PER_S
    expected = [0.0, 0.5 * d * 43_200.0**2, 0.5 * d * 86_400.0**2,  # at a sync: the run before it
                d * (86_400.0 * 3600.0 + 0.5 * 3600.0**2)]
    assert det == pytest.approx(expected, rel=1e-12, abs=1e-30)
    assert np.all(sig == 0.0) and np.allclose(bound, np.abs(det))
