"""Free-running time past the span: the residual's continuation and the search that uses it.

Outside references: closed forms. A residual made of a line and orbital harmonics is continued
exactly (least squares reproduces a function in its own basis); the envelope of a clock with
white FM and linear ageing only, x0 + D t^2/2 + k sqrt(h0 t / 2) (IEEE Std 1139 power law, the
time-error variance of white FM; ITU-R TF.538 quadratic model; common practice), crosses the
budget where scipy's brentq on that closed form says.
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from taubudget.physics.clock import ClockModel
from taubudget.physics.timing_budget import continue_residual, free_running_time

DAY_S = 86_400.0
PERIOD_S = 43_082.0  # a 12-hour-class orbit, invented
SPAN_S = DAY_S
ONE_FEMTOSECOND_S = 1e-15  # far below any figure a budget prints


def _residual(t):
    t = np.asarray(t, dtype=float)
    w = 2.0 * np.pi / PERIOD_S
    return 3e-12 + 1e-17 * t + 4e-11 * np.sin(w * t + 0.3) + 7e-12 * np.cos(2 * w * t)


def test_line_and_harmonics_are_continued_exactly():
    cont = continue_residual(_residual, SPAN_S, PERIOD_S)
    later = np.linspace(SPAN_S, 30 * SPAN_S, 997)
    assert np.max(np.abs(cont(later) - _residual(later))) < ONE_FEMTOSECOND_S
    assert cont.misfit_s < ONE_FEMTOSECOND_S
    assert cont.secular_rate == pytest.approx(1e-17, rel=1e-6)
    assert cont.harmonics == 4


def test_span_shorter_than_a_period_falls_back_to_a_line_with_its_misfit():
    cont = continue_residual(_residual, 0.25 * PERIOD_S, PERIOD_S)
    assert cont.harmonics == 0
    t = np.linspace(0.0, 0.25 * PERIOD_S, 400)
    assert cont.misfit_s == pytest.approx(np.max(np.abs(_residual(t) - cont(t))), rel=0.05)


H0 = 2.0 * (1e-12) ** 2  # white FM of ADEV 1e-12 at 1 s: h0 = 2 sigma^2 (NIST SP 1065)
DRIFT_PER_DAY = 5e-14
X0_S = 1e-9
K = 3.0


def _closed_form_crossing_s(budget_s):
    d = DRIFT_PER_DAY / DAY_S

    def excess(t):
        return X0_S + 0.5 * d * t * t + K * math.sqrt(H0 * t / 2.0) - budget_s
    return brentq(excess, 1.0, 1e9, xtol=1e-6)


def test_search_goes_past_the_span_to_the_closed_form_crossing():
    clock = ClockModel(h_alpha={0: H0}, drift_per_day=DRIFT_PER_DAY, initial_time_offset_s=X0_S)
    found = free_running_time(lambda t: np.zeros_like(np.asarray(t, dtype=float)), clock, 10e-9, K,
                              SPAN_S, PERIOD_S)
    assert not found.within_span and found.continuation is not None
    assert found.t_s > SPAN_S
    assert found.t_s == pytest.approx(_closed_form_crossing_s(10e-9), rel=1e-9)


def test_inside_the_span_the_continuation_is_not_used():
    clock = ClockModel(h_alpha={0: H0}, drift_per_day=DRIFT_PER_DAY, initial_time_offset_s=X0_S)
    found = free_running_time(lambda t: np.zeros_like(np.asarray(t, dtype=float)), clock, 3e-9, K,
                              SPAN_S, PERIOD_S)
    assert found.within_span and found.continuation is None
    assert found.t_s == pytest.approx(_closed_form_crossing_s(3e-9), rel=1e-9)


def test_a_periodic_residual_past_the_span_moves_the_crossing_where_the_exact_envelope_is():
    clock = ClockModel(h_alpha={0: H0}, drift_per_day=DRIFT_PER_DAY, initial_time_offset_s=X0_S)
    quiet = free_running_time(lambda t: np.zeros_like(np.asarray(t, dtype=float)), clock, 10e-9, K,
                              SPAN_S, PERIOD_S)
    noisy = free_running_time(_residual, clock, 10e-9, K, SPAN_S, PERIOD_S)
    assert noisy.t_s != pytest.approx(quiet.t_s, rel=1e-4)
    # at the crossing the envelope with the exact residual equals the budget
    from taubudget.physics.timing_budget import combined_time_error
    b = combined_time_error(_residual, clock, np.array([noisy.t_s]), K).bound_s[0]
    assert b + noisy.continuation.misfit_s == pytest.approx(10e-9, rel=1e-6)
