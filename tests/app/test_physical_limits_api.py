"""Inputs at and past the physical limits: every one a 4xx naming the field, never a 500."""

import copy
import json
from pathlib import Path

import pytest
from taubudget.app.schemas import EXAMPLE_REQUEST

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"


def _sample(name):
    return json.loads((SAMPLES / name).read_text())


def _base():
    return copy.deepcopy(EXAMPLE_REQUEST)


def _case_huge_orbit():
    b = _base()
    b["orbit"]["semi_major_axis_km"] = 1e300
    return b


def _case_beyond_hill_sphere():
    b = _base()
    b["orbit"]["semi_major_axis_km"] = 2.0e6  # the Earth's Hill sphere is ~1.5e6 km (common practice)
    return b


def _case_gcrs_forced_for_the_sun():
    b = _sample("heliocentric_cruise.json")
    b["frame"] = "GCRS"
    return b


def _case_gcrs_forced_with_tdb():
    b = _base()
    b.update(frame="GCRS", reference="TDB")
    return b


def _case_state_at_the_geocentre():
    b = _base()
    b["orbit"] = {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
                  "position_gcrs_km": [0.0, 0.0, 0.0], "velocity_gcrs_km_per_s": [1.0, 0.0, 0.0]}
    return b


def _case_long_numerical_propagation():
    b = _base()
    b["orbit"] = {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
                  "position_gcrs_km": [6928.0, 0.0, 0.0], "velocity_gcrs_km_per_s": [0.0, 7.585, 0.0]}
    b.update(end=None, duration_days=400.0)
    return b


def _case_tle_years_from_epoch():
    b = _sample("leo_timing_smallsat.json")
    b["start"] = "2029-05-15T00:00:00Z"
    return b


@pytest.mark.parametrize("make,pointer,words", [
    (_case_huge_orbit, "/orbit/semi_major_axis_km", "Hill sphere"),
    (_case_beyond_hill_sphere, "/orbit/semi_major_axis_km", "Hill sphere"),
    (_case_gcrs_forced_for_the_sun, "/frame", "barycentric"),
    (_case_gcrs_forced_with_tdb, "/frame", "barycentric"),
    (_case_state_at_the_geocentre, "/orbit/position_gcrs_km", "inside the Earth"),
    # the request sets the span by duration_days, so that is the field named (not "end")
    (_case_long_numerical_propagation, "/duration_days", "MAX_NUMERICAL_REVOLUTIONS"),
    (_case_tle_years_from_epoch, "/start", "TLE epoch"),
])
def test_physical_limit_is_a_422(client, problem_of, make, pointer, words):
    problem = problem_of(client.post("/v1/budgets", json=make()), 422)
    assert pointer in [e["pointer"] for e in problem["errors"]]
    assert words in problem["detail"]


def test_tle_weeks_from_epoch_warns(client):
    b = _sample("leo_timing_smallsat.json")
    b["start"] = "2027-05-15T00:00:00Z"
    out = client.post("/v1/budgets", json=b).json()
    assert out["warnings"] and "TLE epoch" in out["warnings"][0]
    assert client.post("/v1/budgets", json=_sample("leo_timing_smallsat.json")).json()["warnings"] == []


def test_contact_plan_for_a_heliocentric_orbit_is_refused(client, problem_of):
    p = _sample("contact_plan_meo.json")
    p["orbit"] = _sample("heliocentric_cruise.json")["orbit"]
    problem = problem_of(client.post("/v1/contact-plans", json=p), 422)
    assert "/orbit/center" in [e["pointer"] for e in problem["errors"]]


def test_non_finite_query_values_are_refused(client, problem_of):
    q = {"semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
         "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "field": "mean_rate_us_per_day"}
    for name in ("ra_of_asc_node_deg", "mean_anomaly_deg", "nominal_frequency_hz"):
        for bad in ("nan", "inf"):
            problem = problem_of(client.get("/v1/budgets.csv", params={**q, name: bad}), 422)
            assert f"/{name}" in [e["pointer"] for e in problem["errors"]]


def test_deeply_nested_body_is_a_400(client, problem_of):
    problem = problem_of(client.post("/v1/budgets", content=b"[" * 100_000 + b"]" * 100_000), 400)
    assert "too deeply" in problem["detail"]


def test_repeated_query_parameter_is_refused(client, problem_of):
    url = ("/v1/budgets.csv?semi_major_axis_km=26561.4&semi_major_axis_km=7000&eccentricity=0"
           "&inclination_deg=55&start=2027-03-01T00:00:00Z&duration_days=1")
    problem = problem_of(client.get(url), 422)
    assert problem["errors"][0]["parameter"] == "semi_major_axis_km"
    assert "more than once" in problem["errors"][0]["detail"]


@pytest.mark.parametrize("body", ["sun", "moon"])
@pytest.mark.parametrize("reference,frame", [("TDB", "auto"), ("TT", "BCRS"), ("lunar_surface", "auto")])
def test_body_switch_for_an_earth_clock_in_the_bcrs_is_refused(client, problem_of, body, reference, frame):
    # Found by review: with the Sun off, a 7000 km orbit read +838.67 us/day against TDB where the
    # GCRS (and TT, which shares TDB's mean rate: IERS TN36 ch. 10) gives -21.98 us/day: the BCRS
    # switch removed GM_sun/(1 au c^2) = 9.87e-9 from the clock but not from the reference.
    b = {"orbit": {"type": "keplerian", "center": "earth", "epoch": "2027-03-01T00:00:00Z",
                   "semi_major_axis_km": 7000.0, "eccentricity": 0.001, "inclination_deg": 51.6},
         "reference": reference, "frame": frame, "start": "2027-03-01T00:00:00Z", "duration_days": 2,
         "gravity": {"earth_zonal_degree": 4, "sun": True, "moon": True}}
    b["gravity"][body] = False
    problem = problem_of(client.post("/v1/budgets", json=b), 422)
    assert f"/gravity/{body}" in [e["pointer"] for e in problem["errors"]]
    assert "tidal part" in problem["detail"]


def test_huge_integer_literal_is_a_400_in_plain_words(client, problem_of):
    # Review: a 5001-digit integer got Python's advice about sys.set_int_max_str_digits().
    body = b'{"orbit": {"type": "keplerian", "semi_major_axis_km": ' + b"9" * 5001 + b"}}"
    problem = problem_of(client.post("/v1/budgets", content=body), 400)
    assert "5001 digits" in problem["detail"] and "sys." not in problem["detail"]
