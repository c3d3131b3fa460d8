"""Integration accuracy: convergence, the error estimate as a bound, continuity across panels."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from support.budgets import as_dict, kepler_budget
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.quadrature import integrate
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

ONE_PS_PER_DAY_S = 1e-12  # integration target (DESIGN.md): 1 ps per day of span
FULL = GravityModel(4, True, True)


def _budget(ts, e, days, nodes_scale=1.0, tol=None):
    start = ts.utc(2027, 3, 1)
    span = Span(start, days * 86400.0)
    src = KeplerianOrbit(start, 26561.4e3 if e < 0.5 else 40000e3, e, 63.0, 10.0, 270.0, 5.0)
    kw = {} if tol is None else {"tol_fractional": tol}
    return as_dict(compute_budget(BudgetInputs(src, "TT", span, FULL, series_step_s=3600.0,
                                       nodes_scale=nodes_scale, **kw)))


def test_doubling_nodes_changes_offset_below_1ps_per_day(ts):
    for e, days in ((0.01, 7), (0.7, 7)):
        base = _budget(ts, e, days)
        fine = _budget(ts, e, days, nodes_scale=2.0)
        assert fine["nodes_used"] > base["nodes_used"]
        diff_s = np.max(np.abs(np.subtract(fine["series"]["offset_ns"], base["series"]["offset_ns"]))) * 1e-9
        assert diff_s < ONE_PS_PER_DAY_S * days


def test_error_estimate_bounds_true_error(ts):
    # A converged reference: 4x smaller initial panels and a 1e-4 x tighter tolerance.
    for e in (0.16, 0.7):
        base = _budget(ts, e, 3)
        ref = _budget(ts, e, 3, nodes_scale=4.0, tol=1e-22)
        diff_ns = np.subtract(base["series"]["offset_ns"], ref["series"]["offset_ns"])
        true_err_ps = np.max(np.abs(diff_ns)) * 1e3
        assert true_err_ps <= base["integration_error_estimate_ps"] + 1e-6
        assert base["integration_error_estimate_ps_per_day"] < 1.0


def test_legendre_antiderivative_exact_for_smooth_function():
    period = 43082.0
    q = integrate(lambda t: np.sin(2 * np.pi * t / period) + 1.0, 0.0, 3.3 * period, period / 2)
    t = np.linspace(0.0, 3.3 * period, 777)
    exact = t + period / (2 * np.pi) * (1 - np.cos(2 * np.pi * t / period))
    assert np.max(np.abs(q.cumulative_at(t)[0] - exact)) < 1e-9 * period


@settings(max_examples=30, deadline=None)
@given(e=st.floats(0.0, 0.75), frac=st.floats(0.2, 3.0), eps=st.floats(1e-6, 1e-2))
def test_offset_continuous_across_panel_edges(ts, e, frac, eps):
    # The cumulative offset from the panel to the left and to the right of an edge agree
    # (e <= 0.75 keeps the 30,000 km orbit's perigee above the surface).
    start = ts.utc(2027, 3, 1)
    src = KeplerianOrbit(start, 30000e3, e, 40.0, 0.0, 0.0, 0.0)
    period = src.period_s()
    span = Span(start, frac * period)
    from taubudget.physics.environment import environment_for
    from taubudget.physics.rate import integrand_terms

    env = environment_for(span)
    q = integrate(lambda t: integrand_terms(src, "TT", t, FULL, env).total, 0.0, span.duration_s, period / 2)
    inner = q.edges_s[1:-1]
    if inner.size == 0:
        return
    left = q.cumulative_at(inner - eps)[0]
    right = q.cumulative_at(inner + eps)[0]
    slope = 3e-9  # |g| bound: (v^2/2 + GM/r)/c^2 at a 6,000 km perigee is < 2e-9
    assert np.max(np.abs(right - left)) < 2 * eps * slope + 1e-18


def test_small_budget_helper_runs(ts):
    _, _, b = kepler_budget(ts, 8000.0, 0.05, 5000.0, gravity=FULL)
    assert b["nodes_used"] >= 16
