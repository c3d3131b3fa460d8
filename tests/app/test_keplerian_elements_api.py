"""Keplerian elements through the API: element_type, the field the orbit follows, the model block.

Outside references: the numerical integration of the same field from the same GCRS state
(the ``state_vector`` orbit, DOP853), which issue 10 asks the osculating elements to match in
mean rate within 2e-15; the two-body conversion of the elements (Vallado, 4th ed., algorithm
10) for that state.
"""

import numpy as np
from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, L_G
from taubudget.physics.kepler import elements_to_state

MEAN_RATE_AGREEMENT = 2e-15  # issue 10, check (a)
ELEMENTS = {"semi_major_axis_km": 6878.137, "eccentricity": 0.001, "inclination_deg": 28.5,
            "ra_of_asc_node_deg": 30.0, "arg_of_pericenter_deg": 40.0, "mean_anomaly_deg": 10.0}
J2_J4 = {"earth_zonal_degree": 4, "sun": False, "moon": False}


def _body(orbit, gravity=J2_J4, days=2.0):
    return {"orbit": orbit, "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": days,
            "gravity": gravity}


def _kepler(**extra):
    return {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", **ELEMENTS, **extra}


def _post(client, body):
    resp = client.post("/v1/budgets", json=body)
    assert resp.status_code == 200, resp.text
    return resp.json()


def test_default_osculating_elements_match_the_state_vector_of_their_two_body_conversion(client):
    angles = ("inclination_deg", "ra_of_asc_node_deg", "arg_of_pericenter_deg", "mean_anomaly_deg")
    r, v, _ = elements_to_state(GM_EARTH_TCG_M3_PER_S2, ELEMENTS["semi_major_axis_km"] * 1e3,
                                ELEMENTS["eccentricity"], *np.radians([ELEMENTS[k] for k in angles]))
    state = {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
             "position_gcrs_km": (r[0] / 1e3).tolist(), "velocity_gcrs_km_per_s": (v[0] / 1e3).tolist(),
             "force_model": J2_J4}
    ours = _post(client, _body(_kepler()))
    ref = _post(client, _body(state))
    assert abs(ours["mean_fractional_rate"] - ref["mean_fractional_rate"]) < MEAN_RATE_AGREEMENT
    orbit = ours["model"]["orbit"]
    assert orbit["element_type"] == "osculating"
    assert "Brouwer" in orbit["element_theory"]


def test_mean_elements_are_named_and_differ_from_osculating(client):
    mean = _post(client, _body(_kepler(element_type="mean")))
    osc = _post(client, _body(_kepler(element_type="osculating")))
    assert mean["model"]["orbit"]["element_type"] == "mean"
    # The same numbers are different orbits (J2 short-period terms of ~10 km in LEO).
    assert abs(mean["mean_fractional_rate"] - osc["mean_fractional_rate"]) > 1e-14
    # j2_secular, kept for earlier clients, reads the elements as mean elements.
    alias = _post(client, _body(_kepler(j2_secular=True)))
    assert alias["mean_fractional_rate"] == mean["mean_fractional_rate"]


def test_point_mass_reduces_both_to_the_two_body_orbit(client):
    point = {"earth_zonal_degree": 0, "sun": False, "moon": False}
    rates = [_post(client, _body(_kepler(element_type=t), point))["mean_fractional_rate"]
             for t in ("osculating", "mean")]
    assert rates[0] == rates[1]
    # Two-body mean rate (DESIGN.md: v^2/2 + GM/r = 3GM/(2a) + 2 d(r.v)/dt, TN36 eqs. 10.2, 10.6):
    # y = (L_G - 3 GM/(2 a c^2)) / (1 - L_G), whatever e.
    a_m = ELEMENTS["semi_major_axis_km"] * 1e3
    expected = (L_G - 1.5 * GM_EARTH_TCG_M3_PER_S2 / (a_m * C2_M2_PER_S2)) / (1.0 - L_G)
    assert abs(rates[0] - expected) < 1e-17


def test_contradictions_are_refused_by_name(client):
    resp = client.post("/v1/budgets", json=_body(_kepler(element_type="osculating", j2_secular=True)))
    assert resp.status_code == 422
    assert "j2_secular" in resp.text and "osculating" in resp.text
    sun = {"type": "keplerian", "center": "sun", "epoch": "2027-03-01T00:00:00Z",
           "semi_major_axis_km": 1.496e8, "eccentricity": 0.01, "inclination_deg": 1.0,
           "element_type": "mean"}
    resp = client.post("/v1/budgets", json={**_body(sun), "reference": "TDB"})
    assert resp.status_code == 422
    assert "element_type" in resp.text


def test_query_parameters_take_the_element_type(client):
    # GET /v1/budgets.csv reads the same element_type as the JSON body.
    params = {**ELEMENTS, "start": "2027-03-01T00:00:00Z", "duration_days": 2.0, "reference": "TT",
              "earth_zonal_degree": 4, "sun": False, "moon": False, "field": "mean_fractional_rate"}
    for element_type in ("osculating", "mean"):
        text = client.get("/v1/budgets.csv", params={**params, "element_type": element_type}).text
        body = _post(client, _body(_kepler(element_type=element_type)))
        assert float(text) == body["mean_fractional_rate"]
