"""Time-error prediction and Monte Carlo against analytic results for Wiener processes.

Outside references:
- White FM: x(t) is a Wiener process, Var x = h0 t / 2; random-walk FM: Var x =
  (2 pi^2/3) h_-2 t^3 (both equal t^2 sigma_y^2(t), DESIGN.md "t sigma_y(t)", common
  practice; derivation in physics.clock.time_error).
- Two-sided exit of a Wiener process with Var W_t = s^2 t from (-b, b) before t:
  P(max |W| < b) = (4/pi) sum_k (-1)^k/(2k+1) exp(-(2k+1)^2 pi^2 s^2 t / (8 b^2))
  (Feller, An Introduction to Probability Theory, vol. 2, ch. X.5; from memory), with the
  discrete-monitoring correction b -> b + 0.5826 s sqrt(dt) (Broadie, Glasserman & Kou
  1997, Mathematical Finance 7(4):325, beta = -zeta(1/2)/sqrt(2 pi)).
- Closed-form solutions of |x_det| + k sigma = budget for pure drift and pure white FM.
"""

import math

import numpy as np
import pytest
from taubudget.physics.clock import ClockModel, simulate, time_error

SEED = 4242
N_REALISATIONS = 3000
N_STEPS = 1000
TAU0_S = 1.0

SAMPLING_SIGMAS = 3.0
"""Monte Carlo checks pass within 3 standard errors of the sampling distribution."""

ROOT_FINDING = 1e-8
"""brentq is run to rtol 1e-9; 1e-8 relative leaves margin."""


@pytest.mark.parametrize(
    "h_alpha",
    [{0: 2e-24}, {-2: 1.5e-35}, {0: 2e-24, -2: 1.5e-30}],
    ids=["white_fm", "random_walk_fm", "white_plus_random_walk"],
)
def test_monte_carlo_spread_matches_analytic_sigma(h_alpha):
    t, x = simulate.simulate_time_error_s(h_alpha, N_STEPS, TAU0_S, SEED, N_REALISATIONS)
    for i in (100, N_STEPS):
        parts = time_error.time_error_variance_components_s2(t[i], h_alpha)
        # discrete RW FM: Var = tau0^2 Q sum k^2 = continuous * (1 + 3/(2n) + ...)
        rw = parts.get("random_walk_fm", 0.0) * (1.0 + 1.5 / i)
        sigma = math.sqrt(float(parts.get("white_fm", 0.0) + rw))
        spread = float(np.sqrt(np.mean(x[:, i] ** 2)))  # mean is 0 by construction
        # std error of an RMS of n Gaussian samples: sigma / sqrt(2 n)
        standard_error = sigma / math.sqrt(2 * N_REALISATIONS)
        assert abs(spread - sigma) < SAMPLING_SIGMAS * standard_error


def test_sigma_equals_t_times_adev_for_white_and_random_walk_fm():
    from taubudget.physics.clock import powerlaw

    t = np.array([10.0, 1e3, 1e5])
    for h in ({0: 3e-25}, {-2: 2e-33}):
        np.testing.assert_allclose(
            time_error.time_error_sigma_s(t, h), t * powerlaw.allan_deviation_from_h(h, t)
        )


def _two_sided_survival(s2t: float, b: float, terms: int = 50) -> float:
    k = np.arange(terms)
    return float(
        4.0
        / math.pi
        * np.sum((-1.0) ** k / (2 * k + 1) * np.exp(-((2 * k + 1) ** 2) * math.pi**2 * s2t / (8.0 * b**2)))
    )


def test_exceedance_probability_matches_brownian_exit():
    h0 = 2e-24
    t_end = N_STEPS * TAU0_S
    sigma_end = math.sqrt(h0 * t_end / 2.0)
    budget = 2.0 * sigma_end
    result = simulate.exceedance_probability(
        budget, t_end, TAU0_S, {0: h0}, n_realisations=N_REALISATIONS, seed=SEED
    )
    step_sigma = math.sqrt(h0 * TAU0_S / 2.0)
    expected = 1.0 - _two_sided_survival(sigma_end**2, budget + 0.5826 * step_sigma)
    binomial = math.sqrt(expected * (1 - expected) / N_REALISATIONS)
    assert abs(result.probability - expected) < SAMPLING_SIGMAS * binomial
    assert result.standard_error == pytest.approx(binomial, rel=0.2)
    assert np.all(np.isnan(result.first_exceedance_s) | (result.first_exceedance_s <= t_end))


def test_exceedance_is_reproducible_with_a_seed():
    args = (5e-11, 500.0, 1.0, {0: 2e-24, -1: 1e-28})
    a = simulate.exceedance_probability(*args, n_realisations=200, seed=9)
    b = simulate.exceedance_probability(*args, n_realisations=200, seed=9)
    assert a.n_exceeded == b.n_exceeded
    np.testing.assert_array_equal(a.first_exceedance_s, b.first_exceedance_s)


def test_max_free_running_pure_drift_closed_form():
    drift_per_day = 1e-12
    budget = 1e-8
    t = time_error.max_free_running_s(budget, {}, drift_per_day=drift_per_day)
    d = drift_per_day / time_error.SECONDS_PER_DAY
    assert t == pytest.approx(math.sqrt(2.0 * budget / d), rel=ROOT_FINDING)


def test_max_free_running_pure_white_fm_closed_form():
    h0, k, budget = 2e-24, 3.0, 5e-9
    t = time_error.max_free_running_s(budget, {0: h0}, k_sigma=k)
    assert t == pytest.approx(2.0 * budget**2 / (k**2 * h0), rel=ROOT_FINDING)


def test_max_free_running_edges():
    assert time_error.max_free_running_s(1e-9, {}, initial_time_offset_s=2e-9) == 0.0
    assert math.isinf(time_error.max_free_running_s(1e-9, {}, t_max_s=1e6))


def test_first_crossing_is_taken_when_the_envelope_is_not_monotonic():
    # x = y0 t + D t^2/2 with y0 < 0 < D: |x| rises, falls to 0 at t0 = -2 y0 / D, rises again.
    y0, drift_per_day = -1e-12, 1e-12
    d = drift_per_day / time_error.SECONDS_PER_DAY
    peak = y0**2 / (2.0 * d)  # |x| at its first extremum, t = -y0/D
    budget = 0.5 * peak
    t = time_error.max_free_running_s(
        budget, {}, initial_fractional_frequency=y0, drift_per_day=drift_per_day
    )
    # first root of -y0 t - D t^2 / 2 = budget (the smaller root of the quadratic)
    first = (-y0 - math.sqrt(y0**2 - 2.0 * d * budget)) / d
    assert t == pytest.approx(first, rel=ROOT_FINDING)


def test_residual_series_is_added_and_nan_outside():
    rt = np.array([0.0, 100.0, 200.0])
    rx = np.array([0.0, 2e-9, 0.0])
    det = time_error.deterministic_time_error_s(
        [50.0, 150.0, 300.0], 1e-9, 0.0, 0.0, residual_t_s=rt, residual_offset_s=rx
    )
    np.testing.assert_allclose(det[:2], [2e-9, 2e-9])
    assert np.isnan(det[2])


def test_clock_model_from_preset_and_from_adev_points_agree():
    rb = ClockModel.from_preset("space_rubidium", initial_time_offset_s=1e-9)
    taus = np.logspace(0, 6, 13)
    refit = ClockModel(adev_tau_s=tuple(taus), adev=tuple(rb.adev_at(taus)))
    for alpha, h in rb.h_alpha.items():
        assert refit.h_alpha[alpha] == pytest.approx(h, rel=0.01)  # issue 4: within 1%
    t = np.array([0.0, 3600.0, 86400.0])
    series = rb.time_error(t, k_sigma=3.0)
    assert series.deterministic_s[0] == pytest.approx(1e-9)
    np.testing.assert_allclose(series.bound_s, np.abs(series.deterministic_s) + 3 * series.sigma_s)
    limit = rb.max_free_running_s(20e-9, k_sigma=3.0)
    assert float(rb.time_error([limit], 3.0).bound_s[0]) == pytest.approx(20e-9, rel=1e-6)
    with pytest.raises(KeyError, match="unknown oscillator preset"):
        ClockModel.from_preset("no_such_clock")
