"""Input forms people type: leap seconds, dates without a time, decimal commas, orbits in the air.

Outside truth: the UTC leap-second table (IERS Bulletin C; a leap second was inserted at the end
of 2016-12-31 and 2015-06-30, none at the end of 2016-06-30), ISO 8601 date-time form, and the
100 km boundary of space used by the FAI (a convention, common practice).
"""

from __future__ import annotations

import copy
import json
import subprocess
import sys

import pytest
from taubudget.app.schemas import EXAMPLE_REQUEST


def _body(**changes):
    b = copy.deepcopy(EXAMPLE_REQUEST)
    b.update(changes)
    return b


def _details(resp) -> dict:
    assert resp.status_code == 422, resp.text
    assert resp.headers["content-type"].startswith("application/problem+json")
    return {e["pointer"]: e["detail"] for e in resp.json()["errors"]}


def test_real_leap_second_is_refused_saying_why_and_what_to_give(client):
    d = _details(client.post("/v1/budgets", json=_body(start="2016-12-31T23:59:60Z")))["/start"]
    assert "real UTC leap second" in d
    assert "2017-01-01T00:00:00Z" in d and "2016-12-31T23:59:59Z" in d


def test_second_60_on_a_day_without_a_leap_second_says_so(client):
    d = _details(client.post("/v1/budgets", json=_body(start="2016-06-30T23:59:60Z")))["/start"]
    assert "no leap second at the end of 2016-06-30" in d


def test_date_only_start_names_the_expected_form(client):
    d = _details(client.post("/v1/budgets", json=_body(start="2027-03-01")))["/start"]
    assert "date without a time" in d and "2027-03-01T00:00:00Z" in d


def test_time_without_zone_names_the_expected_form(client):
    d = _details(client.post("/v1/budgets", json=_body(start="2027-03-01T00:00:00")))["/start"]
    assert "no time zone" in d and "trailing Z" in d


def test_decimal_comma_in_a_query_names_the_decimal_point(client):
    resp = client.get("/v1/budgets.csv", params={"semi_major_axis_km": "26561,4",
                                                 "start": "2027-03-01T00:00:00Z"})
    d = _details(resp)["/semi_major_axis_km"]
    assert "decimal comma" in d and "26561.4" in d


def test_decimal_comma_in_a_json_body_names_the_decimal_point(client):
    raw = json.dumps(_body()).replace('"semi_major_axis_km": 26561.4', '"semi_major_axis_km": 26561,4')
    assert "26561,4" in raw
    resp = client.post("/v1/budgets", content=raw.encode(), headers={"content-type": "application/json"})
    assert resp.status_code == 400
    assert "decimal comma" in resp.json()["detail"] and "26561.4" in resp.json()["detail"]


def test_cli_names_the_expected_forms(tmp_path):
    body = _body(start="2027-03-01")
    body["orbit"]["semi_major_axis_km"] = "26561,4"
    path = tmp_path / "req.json"
    path.write_text(json.dumps(body))
    run = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "budget", str(path)],
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 2
    assert "date without a time" in run.stderr and "decimal comma" in run.stderr
    assert "Traceback" not in run.stderr


# Circular orbits: 12 km is in the air; 100 km is the FAI's boundary of space.
EARTH_EQUATORIAL_RADIUS_KM = 6378.1366  # IERS Conventions 2010 (TN36 Table 1.1)


@pytest.mark.parametrize("altitude_km", [12.0, 99.0])
def test_circular_orbit_in_the_atmosphere_is_refused(client, altitude_km):
    body = _body()
    body["orbit"].update(semi_major_axis_km=EARTH_EQUATORIAL_RADIUS_KM + altitude_km, eccentricity=0.0)
    resp = client.post("/v1/budgets", json=body)
    d = _details(resp)["/orbit/semi_major_axis_km"]
    assert "below 100 km" in d and "FAI" in d and "common practice" in d


def test_orbit_just_above_the_boundary_is_accepted(client):
    body = _body(duration_days=0.1)
    body.pop("end", None)
    body["orbit"].update(semi_major_axis_km=EARTH_EQUATORIAL_RADIUS_KM + 150.0, eccentricity=0.0)
    assert client.post("/v1/budgets", json=body).status_code == 200


def test_state_vector_in_the_atmosphere_is_refused(client):
    body = _body()
    r_km = EARTH_EQUATORIAL_RADIUS_KM + 50.0
    v = (398600.4418 / r_km) ** 0.5  # circular speed, GM_E of TN36
    body["orbit"] = {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
                     "position_gcrs_km": [r_km, 0.0, 0.0], "velocity_gcrs_km_per_s": [0.0, v, 0.0]}
    d = _details(client.post("/v1/budgets", json=body))["/orbit/position_gcrs_km"]
    assert "below 100 km" in d
