"""The budget's clock_error block: the oscillator on top of the relativistic residual.

Outside references: the quadratic clock model x0 + y0 t + D t^2/2 (ITU-R TF.538; common
practice) and the time-error variances of white FM (h_0 t/2), flicker FM (2 ln 2 h_-1 t^2)
and random-walk FM (2 pi^2/3 h_-2 t^3) from IEEE Std 1139 power-law noise (DESIGN.md,
"expected time error after t ~ t sigma_y(t)"), with h_alpha rebuilt from the preset's
stated Allan deviations by the closed forms sigma_y^2 = h_0/(2 tau), 2 ln 2 h_-1,
(2 pi^2/3) h_-2 tau (NIST SP 1065 / Barnes et al. 1971). The relativistic residual is
checked against physics.budget.Budget computed independently for the same request.
"""

from __future__ import annotations

import copy
import json
import math

import numpy as np
import pytest
from taubudget.app.schemas import BudgetRequest
from taubudget.app.service import budget_inputs
from taubudget.physics.budget import compute_budget
from taubudget.physics.clock import ClockModel

DAY_S = 86_400.0
RUBIDIUM_ADEV_AT_1S = 1e-12  # space_rubidium preset description: white FM figure
RUBIDIUM_FLICKER_FLOOR = 5e-15  # its flicker floor
RUBIDIUM_RW_ADEV, RUBIDIUM_RW_TAU_S = 1e-14, 1e6  # its random walk point
RUBIDIUM_DRIFT_PER_DAY = 5e-14  # its ageing

Y0 = 1e-13  # invented calibration residual
X0_NS = 0.5  # invented sync offset, ns

ROUNDING = 1e-9  # relative: sums of doubles and the ns conversion only
ONE_FEMTOSECOND_NS = 1e-6  # absolute floor for comparing ns figures
FREE_RUNNING_REL = 1e-6  # brief: the bound at max_free_running_s equals the budget to 1e-6

BASE = {
    "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
              "eccentricity": 0.01, "inclination_deg": 55.0, "ra_of_asc_node_deg": 20.0,
              "arg_of_pericenter_deg": 30.0, "mean_anomaly_deg": 40.0},
    "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
    "gravity": {"earth_zonal_degree": 2, "sun": False, "moon": False},
    "clock": {"preset": "space_rubidium", "initial_fractional_frequency": Y0,
              "initial_time_offset_ns": X0_NS},
    "k_sigma": 3.0,
}


def _body(**changes) -> dict:
    body = copy.deepcopy(BASE)
    body.update(changes)
    return body


def _budget(body):
    return compute_budget(budget_inputs(BudgetRequest.model_validate(body)))


def _post(client, body) -> dict:
    resp = client.post("/v1/budgets", json=body)
    assert resp.status_code == 200, resp.text
    return resp.json()


def _sigma_closed_form_s(t: float) -> float:
    h0 = 2.0 * RUBIDIUM_ADEV_AT_1S**2
    hm1 = RUBIDIUM_FLICKER_FLOOR**2 / (2.0 * math.log(2.0))
    hm2 = 3.0 * RUBIDIUM_RW_ADEV**2 / (2.0 * math.pi**2 * RUBIDIUM_RW_TAU_S)
    return math.sqrt(h0 * t / 2.0 + 2.0 * math.log(2.0) * hm1 * t**2 + 2.0 * math.pi**2 / 3.0 * hm2 * t**3)


def _clock_det_s(t):
    return X0_NS * 1e-9 + Y0 * t + 0.5 * RUBIDIUM_DRIFT_PER_DAY / DAY_S * t**2


def test_stochastic_part_at_the_end_is_the_clock_prediction(client):
    ce = _post(client, _body())["clock_error"]
    assert ce["elapsed_s"] == DAY_S
    model = ClockModel.from_preset("space_rubidium")
    expected_ns = float(model.time_error(np.array([DAY_S])).sigma_s[0]) * 1e9
    assert ce["stochastic_1sigma_ns"] == pytest.approx(expected_ns, rel=ROUNDING)
    assert ce["stochastic_1sigma_ns"] == pytest.approx(_sigma_closed_form_s(DAY_S) * 1e9, rel=ROUNDING)
    assert set(ce["stochastic_1sigma_components_ns"]) == {"white_fm", "flicker_fm", "random_walk_fm"}
    assert ce["k_sigma_bound_ns"] == pytest.approx(
        abs(ce["deterministic_ns"]) + 3.0 * ce["stochastic_1sigma_ns"], rel=ROUNDING)
    model_out = ce["clock_model"]
    assert model_out["source"] == "preset"
    assert "typical values, replace with your unit's data" in model_out["label"]


@pytest.mark.parametrize("corrected", [True, False])
def test_deterministic_part_includes_the_relativistic_residual(client, corrected):
    body = _body(apply_eccentricity_correction=corrected)
    ce = _post(client, body)["clock_error"]
    budget = _budget(body)
    residual = budget.after_correction_s if corrected else budget.after_preset_s
    r_end_ns = float(residual(DAY_S)[0]) * 1e9
    assert ce["relativistic_residual"] == ("after_correction" if corrected else "after_preset")
    assert ce["relativistic_residual_ns"] == pytest.approx(r_end_ns, rel=ROUNDING, abs=ONE_FEMTOSECOND_NS)
    ageing_ns = 0.5 * RUBIDIUM_DRIFT_PER_DAY / DAY_S * DAY_S**2 * 1e9
    assert ce["ageing_ns"] == pytest.approx(ageing_ns, rel=ROUNDING)
    assert ce["initial_frequency_ns"] == pytest.approx(Y0 * DAY_S * 1e9, rel=ROUNDING)
    assert ce["initial_time_offset_ns"] == X0_NS
    assert ce["deterministic_ns"] == pytest.approx(r_end_ns + _clock_det_s(DAY_S) * 1e9, rel=ROUNDING)


def test_the_two_residual_choices_differ_by_the_eccentricity_term(client):
    """Non-trivial fixture: e = 0.01 leaves a ns-level eccentricity term at the span end."""
    a = _post(client, _body(apply_eccentricity_correction=True))["clock_error"]
    b = _post(client, _body(apply_eccentricity_correction=False))["clock_error"]
    budget = _budget(_body())
    ecc_ns = float(budget.eccentricity_term_s(DAY_S)[0]) * 1e9
    assert abs(ecc_ns) > 0.1
    assert b["deterministic_ns"] - a["deterministic_ns"] == pytest.approx(ecc_ns, rel=1e-6)


@pytest.mark.parametrize("corrected, budget_ns", [(True, 6.0), (False, 6.0), (True, 12.0)])
def test_max_free_running_is_where_the_bound_reaches_the_budget(client, corrected, budget_ns):
    body = _body(apply_eccentricity_correction=corrected, time_error_budget_ns=budget_ns)
    ce = _post(client, body)["clock_error"]
    assert ce["budget_reached_within_span"] is True
    t_free = ce["max_free_running_s"]
    assert 0.0 < t_free < DAY_S
    budget = _budget(body)
    residual = budget.after_correction_s if corrected else budget.after_preset_s
    model = ClockModel.from_preset("space_rubidium")

    def bound_ns(t):
        det = float(residual(t)[0]) + _clock_det_s(t)
        sigma = float(model.time_error(np.array([t])).sigma_s[0])
        return (abs(det) + 3.0 * sigma) * 1e9

    assert bound_ns(t_free) == pytest.approx(budget_ns, rel=FREE_RUNNING_REL)
    # The first crossing: the bound is inside the budget a little earlier.
    for t in np.linspace(0.0, t_free * (1 - 1e-3), 200)[1:]:
        assert bound_ns(t) < budget_ns


def test_budget_not_reached_within_the_span_is_found_beyond_it(client):
    # 1 ms is reached after ~1.8 years (ageing dominates), far past the 1-day span.
    ce = _post(client, _body(time_error_budget_ns=1e6))["clock_error"]
    assert ce["budget_reached_within_span"] is False
    assert ce["max_free_running_beyond_span"] is True
    assert ce["k_sigma_bound_ns"] < 1e6
    assert "continued from a fitted line and 4 harmonics" in ce["max_free_running_basis"]
    t = ce["max_free_running_s"]
    assert t > 300 * DAY_S
    # The residual past the span is ps-level: the closed-form clock envelope crosses there too.
    closed_ns = (abs(_clock_det_s(t)) + 3.0 * _sigma_closed_form_s(t)) * 1e9
    assert closed_ns == pytest.approx(1e6, rel=1e-6)


def test_budget_beyond_the_search_horizon_is_null(client):
    ce = _post(client, _body(time_error_budget_ns=1e12))["clock_error"]
    assert ce["max_free_running_s"] is None
    assert ce["budget_reached_within_span"] is False
    assert ce["max_free_running_beyond_span"] is False
    assert "not reached within 3652.5 days" in ce["max_free_running_basis"]


# sample_orbits/meo_navigation.json over 1 day instead of 7: the 7-day run crosses 10 ns at
# about 32 h, so a 1-day span used to answer "not reached". The closed-form envelope of the
# preset (module docstring) with the file's x0 = 1.5 ns and y0 = 2e-14 crosses 10 ns at 32.08 h.
# The closed form leaves out the relativistic residual after the correction (J2 and tidal periodic
# terms, ~0.1 ns near 32 h); the envelope grows ~0.36 ns/h there (ageing 0.24, y0 0.07, noise
# 0.05), so the residual moves the crossing by up to ~1 %: 2 % against the closed form.
CLOSED_FORM_SHARE = 0.02
RESIDUAL_SHARE = 0.01  # 1-day vs 7-day span: the same residual, fitted over different spans


def _meo_nav_closed_form_s() -> float:
    from scipy.optimize import brentq

    def excess(t):
        det = 1.5e-9 + 2e-14 * t + 0.5 * RUBIDIUM_DRIFT_PER_DAY / DAY_S * t**2
        return det + 3.0 * _sigma_closed_form_s(t) - 10e-9
    return brentq(excess, 1.0, 30 * DAY_S, xtol=1e-6)


def test_one_day_span_finds_the_32_hour_free_running_time(client):
    from pathlib import Path
    body = json.loads((Path(__file__).parents[2] / "sample_orbits" / "meo_navigation.json").read_text())
    week = _post(client, body)["clock_error"]
    body["end"] = "2027-03-02T00:00:00Z"
    body.pop("series_step_s")
    day = _post(client, body)["clock_error"]
    assert week["budget_reached_within_span"] is True and week["max_free_running_beyond_span"] is False
    assert day["budget_reached_within_span"] is False and day["max_free_running_beyond_span"] is True
    assert _meo_nav_closed_form_s() / 3600 == pytest.approx(32.08, abs=0.01)
    assert day["max_free_running_s"] == pytest.approx(_meo_nav_closed_form_s(), rel=CLOSED_FORM_SHARE)
    assert day["max_free_running_s"] == pytest.approx(week["max_free_running_s"], rel=RESIDUAL_SHARE)


def test_sync_offset_beyond_the_budget_leaves_no_free_running(client):
    clock = {**BASE["clock"], "initial_time_offset_ns": 7.0}
    ce = _post(client, _body(clock=clock, time_error_budget_ns=5.0))["clock_error"]
    assert ce["max_free_running_s"] == 0.0


def test_series_block_follows_the_budget_series(client):
    out = _post(client, _body(series_step_s=3600.0, k_sigma=2.0))
    s = out["clock_error"]["series"]
    assert s["time_utc"] == out["series"]["time_utc"]
    assert len(s["deterministic_ns"]) == len(out["series"]["elapsed_s"]) == 25
    det, sigma, bound = (np.array(s[k]) for k in ("deterministic_ns", "sigma_ns", "bound_ns"))
    np.testing.assert_allclose(bound, np.abs(det) + 2.0 * sigma, rtol=ROUNDING)
    assert sigma[0] == 0.0 and det[0] == pytest.approx(X0_NS, abs=ONE_FEMTOSECOND_NS)
    assert det[-1] == pytest.approx(out["clock_error"]["deterministic_ns"], rel=ROUNDING)
    assert sigma[-1] == pytest.approx(out["clock_error"]["stochastic_1sigma_ns"], rel=ROUNDING)


def test_h_alpha_and_fitted_adev_points_give_the_same_clock(client):
    """ADEV points made by the closed forms from known h_alpha are fitted back (residuals ~ 0)."""
    h = {"white_fm": 8e-25, "flicker_fm": 4e-29, "random_walk_fm": 3e-35}
    taus = [1.0, 10.0, 100.0, 1e3, 1e4, 1e5, 1e6]
    adev = [math.sqrt(h["white_fm"] / (2 * t) + 2 * math.log(2) * h["flicker_fm"]
                      + 2 * math.pi**2 / 3 * h["random_walk_fm"] * t) for t in taus]
    by_h = _post(client, _body(clock={"h_alpha": h}))["clock_error"]
    by_fit = _post(client, _body(clock={"adev_points": [[t, a] for t, a in zip(taus, adev, strict=True)]}))[
        "clock_error"]
    assert by_fit["clock_model"]["source"] == "adev_points"
    assert by_fit["clock_model"]["fit"]["rms_relative_residual"] < 1e-6
    for name, value in h.items():
        assert by_fit["clock_model"]["h_alpha"][name] == pytest.approx(value, rel=0.01)  # issue: within 1%
    assert by_fit["stochastic_1sigma_ns"] == pytest.approx(by_h["stochastic_1sigma_ns"], rel=0.01)
    assert by_h["ageing_ns"] == 0.0  # no preset, no drift given


def test_without_a_clock_the_budget_is_unchanged(client):
    body = _body()
    body.pop("clock")
    out = _post(client, body)
    assert "clock_error" not in out


@pytest.mark.parametrize("change, pointer", [
    ({"clock": {"preset": "hydrogen_fountain_x"}}, "/clock/preset"),
    ({"clock": {"preset": "space_rubidium", "h_alpha": {"white_fm": 1e-24}}}, "/clock/h_alpha"),
    ({"clock": {"initial_time_offset_ns": 1.0}}, "/clock"),
    ({"clock": {"h_alpha": {"white_pm": 1e-26}}}, "/clock/f_h_hz"),
    ({"clock": {"h_alpha": {"white_fm": -1e-24}}}, "/clock/h_alpha/white_fm"),
    ({"clock": {"adev_points": [[1.0, 1e-12], [10.0, 3e-13]]}}, "/clock/adev_points"),
    ({"clock": {"preset": "space_rubidium", "drift_per_hour": 1e-14}}, "/clock/drift_per_hour"),
    ({"time_error_budget_ns": 10.0, "clock": None}, "/time_error_budget_ns"),
    ({"time_error_budget_ns": -1.0}, "/time_error_budget_ns"),
    ({"k_sigma": -1.0}, "/k_sigma"),
])
def test_bad_clock_input_is_422_naming_the_field(client, problem_of, pointers_of, change, pointer):
    body = _body(**change)
    if body.get("clock") is None:
        body.pop("clock")
    p = problem_of(client.post("/v1/budgets", json=body), 422)
    assert pointer in pointers_of(p)


def test_csv_query_passes_the_clock_through(client):
    params = {"semi_major_axis_km": 26561.4, "eccentricity": 0.01, "inclination_deg": 55.0,
              "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "earth_zonal_degree": 2,
              "sun": False, "moon": False, "clock_preset": "space_rubidium",
              "time_error_budget_ns": 3.0, "k_sigma": 2.0}
    text = client.get("/v1/budgets.csv", params={**params, "field": "clock_error.stochastic_1sigma_ns"})
    assert text.status_code == 200, text.text
    assert float(text.text) == pytest.approx(_sigma_closed_form_s(DAY_S) * 1e9, rel=ROUNDING)
    summary = client.get("/v1/budgets.csv", params=params).text
    assert "clock_error.max_free_running_s," in summary and "clock_error.k_sigma,2.0" in summary
    bad = client.get("/v1/budgets.csv", params={**params, "clock_preset": "nope"})
    assert bad.status_code == 422
    assert bad.json()["errors"][0]["parameter"] == "clock_preset"


def test_cli_table_shows_the_clock_block(client, tmp_path, capsys):
    from taubudget.app.cli import main

    body = _body(time_error_budget_ns=6.0)
    ce = _post(client, body)["clock_error"]
    path = tmp_path / "req.json"
    path.write_text(json.dumps(body))
    assert main(["budget", str(path)]) == 0
    text = capsys.readouterr().out
    assert "clock error (clock minus reference" in text
    assert f"{ce['k_sigma_bound_ns']:.6f} ns" in text
    assert f"{ce['max_free_running_s']:.1f} s" in text
    assert "typical values, replace with your unit's data" in text
