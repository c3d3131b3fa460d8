"""Deep-space and cislunar requests over HTTP: frames, references and their errors."""

import json
from pathlib import Path

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"


def _sample(name):
    return json.loads((SAMPLES / name).read_text())


def test_lunar_beacon_sample_gains_56_us_per_day(client):
    # Ashby & Patla (2024), arXiv:2402.11150: ~56.02 us/day for a lunar surface clock against TT
    # (this sample sits 1.5 km below the mean sphere: g_moon h/c^2 = 2.7e-14, 0.002 us/day less).
    r = client.post("/v1/budgets", json=_sample("lunar_beacon.json"))
    assert r.status_code == 200, r.text
    b = r.json()
    assert b["frame"] == "BCRS" and "geocentre" in b["tt_convention"]
    assert abs(b["mean_rate_us_per_day"] - 56.02) < 0.05
    assert len(b["series"]["light_time_to_earth_s"]) == len(b["series"]["time_utc"])
    # The Earth-Moon light time is 1.2 to 1.4 s (common practice).
    assert all(1.1 < x < 1.4 for x in b["series"]["light_time_to_earth_s"])


def test_heliocentric_and_mars_samples_run(client):
    for name in ("heliocentric_cruise.json", "mars_station.json", "lunar_orbiter.json"):
        r = client.post("/v1/budgets", json=_sample(name))
        assert r.status_code == 200, (name, r.text)
        assert r.json()["frame"] == "BCRS"


def test_earth_orbit_against_tdb_switches_to_bcrs(client, request_body):
    request_body["reference"] = "TDB"
    # The example's point-mass switches are refused in the BCRS for an Earth clock
    # (test_physical_limits_api.py); the Sun and Moon stay on there.
    request_body["gravity"] = {"earth_zonal_degree": 0, "sun": True, "moon": True}
    b = client.post("/v1/budgets", json=request_body).json()
    assert b["frame"] == "BCRS"
    # TT and TDB share their mean rate (IERS TN36 ch. 10): the GCRS answer against TT agrees.
    request_body["reference"] = "TT"
    gcrs = client.post("/v1/budgets", json=request_body).json()
    assert abs(b["mean_fractional_rate"] - gcrs["mean_fractional_rate"]) < 1e-15
    request_body["reference"] = "TT"
    assert client.post("/v1/budgets", json=request_body).json()["frame"] == "GCRS"


def test_ground_reference_refused_in_bcrs(client, request_body, problem_of):
    body = _sample("heliocentric_cruise.json")
    body["reference"] = {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0}
    r = client.post("/v1/budgets", json=body)
    assert r.status_code == 422
    problem = problem_of(r, 422)
    assert any(e["pointer"] == "/reference" for e in problem["errors"])
    assert "GCRS" in problem["detail"]


def test_moon_orbit_inside_the_moon_is_refused(client, problem_of):
    body = _sample("lunar_orbiter.json")
    body["orbit"]["semi_major_axis_km"] = 1500.0
    r = client.post("/v1/budgets", json=body)
    assert r.status_code == 422
    problem = problem_of(r, 422)
    assert any(e["pointer"] == "/orbit/semi_major_axis_km" for e in problem["errors"])
    assert "inside the moon" in problem["detail"]


def test_geoid_on_the_moon_is_refused(client, problem_of):
    body = _sample("lunar_beacon.json")
    body["orbit"]["geoid_undulation_m"] = 10.0
    r = client.post("/v1/budgets", json=body)
    assert r.status_code == 422
    assert "Earth clocks only" in problem_of(r, 422)["detail"]


def test_csv_query_takes_a_centre_and_barycentric_references(client):
    # The spreadsheet route reaches the same barycentric budget as the JSON body (the lunar
    # figure: Ashby & Patla 2024, ~56.02 us/day against TT).
    body = _sample("lunar_beacon.json")
    q = {"center": "moon", "latitude_deg": body["orbit"]["latitude_deg"],
         "longitude_deg": body["orbit"]["longitude_deg"], "height_m": body["orbit"]["height_m"],
         "start": body["start"], "duration_days": body["duration_days"]}
    text = client.get("/v1/budgets.csv", params={**q, "field": "mean_rate_us_per_day"}).text
    assert float(text) == client.post("/v1/budgets", json=body).json()["mean_rate_us_per_day"]
    assert abs(float(text) - 56.02) < 0.05
    moon_term = client.get("/v1/budgets.csv", params={**q, "field": "terms_fractional.moon"})
    assert moon_term.status_code == 200 and float(moon_term.text) < 0.0  # GM_M/R_M slows the clock
    tdb = client.get("/v1/budgets.csv", params={**q, "reference": "TDB", "field": "tt_convention"})
    assert tdb.status_code == 200 and "geocentre" in tdb.text
