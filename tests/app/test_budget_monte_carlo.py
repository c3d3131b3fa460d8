"""Monte Carlo exceedance in the budget's clock_error, against the analytic envelope."""

import json
import math
from pathlib import Path

from scipy.stats import norm

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"


def _body(**extra):
    body = json.loads((SAMPLES / "meo_navigation.json").read_text())
    body.update({"duration_days": 1.0, "end": None, "series_step_s": None, **extra})
    body["clock"] = {"h_alpha": {"white_fm": 2.0e-24}}  # white FM only: a Wiener time error
    # A point-mass field: the relativistic residual after the eccentricity correction is then
    # ~1e-6 ns, so the exit law below sees the clock noise alone (a J2 field leaves the orbit's
    # real 0.07 ns J2 periodic term, which would bias the comparison).
    body["gravity"] = {"earth_zonal_degree": 0, "sun": False, "moon": False}
    return body


def test_probability_is_reproducible_and_consistent_with_the_envelope(client):
    # White FM: x(t) is a Wiener process with variance h0 t / 2 (NIST SP 1065: sigma_y^2 =
    # h0/(2 tau), and the time error's variance is tau^2 sigma_y^2).
    h0, t_end = 2.0e-24, 86400.0
    sigma_t = (h0 / 2 * t_end) ** 0.5
    budget_s = 1.5 * sigma_t
    body = _body(time_error_budget_ns=budget_s * 1e9, monte_carlo_runs=800, monte_carlo_seed=7)
    body["apply_eccentricity_correction"] = True
    a = client.post("/v1/budgets", json=body).json()["clock_error"]["exceedance"]
    b = client.post("/v1/budgets", json=body).json()["clock_error"]["exceedance"]
    assert a == b  # seeded and reproducible
    # Two-sided exit law of a Wiener process (Feller, An Introduction to Probability Theory,
    # vol. 2, ch. X; series quoted from memory), with the barrier moved out by 0.5826 sigma_step
    # for discrete monitoring (Broadie, Glasserman & Kou 1997, Math. Finance 7:325).
    step = a["step_s"]
    b_eff = budget_s + 0.5826 * (h0 / 2 * step) ** 0.5
    s2 = (sigma_t / b_eff) ** 2
    stay = 4 / math.pi * sum((-1) ** k / (2 * k + 1) * math.exp(-((2 * k + 1) ** 2) * math.pi**2 * s2 / 8)
                             for k in range(50))
    expected = 1 - stay
    # The relativistic residual after preset and correction is ~1e-6 ns here, far below B.
    assert abs(a["probability"] - expected) < 3 * a["standard_error"]
    assert 2 * (1 - norm.cdf(budget_s / sigma_t)) < expected  # above the end-point-only value


def test_monte_carlo_needs_clock_and_budget(client, problem_of):
    body = _body(monte_carlo_runs=100)
    del body["clock"]
    problem = problem_of(client.post("/v1/budgets", json=body), 422)
    assert any(e["pointer"] == "/monte_carlo_runs" for e in problem["errors"])
    body = _body(monte_carlo_runs=100, time_error_budget_ns=None)
    problem = problem_of(client.post("/v1/budgets", json=body), 422)
    assert "time_error_budget_ns" in problem["detail"]
