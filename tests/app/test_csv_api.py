"""GET /v1/budgets.csv: CSV parsed back with the csv module, single fields as text/plain."""

from __future__ import annotations

import math

import pytest
from support.csv_blocks import split_blocks
from taubudget.app.csv_format import SUMMARY_FIELDS, lookup
from taubudget.physics.budget import CAUTION

# Kouba (2004), GPS Solutions 8(3):170-180: circular a = 26,561.4 km, point-mass Earth, vs TT.
KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_RATE_ROUNDING_US_PER_DAY = 1e-6  # published to 1 ps/day
URL_LIMIT_CHARS = 2000  # what spreadsheet tools and proxies reliably pass

CIRCULAR = {"semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
            "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "reference": "TT",
            "earth_zonal_degree": 0, "sun": False, "moon": False}


def _json_body(params):
    """The POST body that the query stands for (checked independently of app/api/query.py)."""
    orbit = {"type": "keplerian", "epoch": params["start"]}
    for k in ("semi_major_axis_km", "eccentricity", "inclination_deg"):
        orbit[k] = params[k]
    body = {"orbit": orbit, "reference": params["reference"], "start": params["start"],
            "duration_days": params["duration_days"],
            "gravity": {k: params[k] for k in ("earth_zonal_degree", "sun", "moon")}}
    if "series_step_s" in params:
        body["series_step_s"] = params["series_step_s"]
    return body


def _parse(text):
    """(field,value block, series rows or None): the whole text read by the csv module."""
    return split_blocks(text)


def test_summary_csv_round_trips_the_json(client):
    resp = client.get("/v1/budgets.csv", params=CIRCULAR)
    assert resp.status_code == 200
    assert resp.headers["content-type"].startswith("text/csv")
    values, table = _parse(resp.text)
    assert table is None
    assert values["caution"] == CAUTION  # one cell, although the text holds commas
    assert values.pop("description") == "taubudget drift budget; offsets are clock minus reference"
    assert float(values["mean_rate_us_per_day"]) == pytest.approx(
        KOUBA_RATE_US_PER_DAY, abs=PUBLISHED_RATE_ROUNDING_US_PER_DAY)
    budget = client.post("/v1/budgets", json=_json_body(CIRCULAR)).json()
    for name, text in values.items():
        expected = lookup(budget, name)
        if isinstance(expected, float):
            assert float(text) == expected, name  # repr keeps every bit of the double
        elif expected is None:
            assert text == ""
        elif isinstance(expected, bool):
            assert text == ("true" if expected else "false"), name
        else:
            assert text == str(expected), name


def test_series_csv_one_row_per_output_time(client):
    params = {**CIRCULAR, "eccentricity": 0.01, "series_step_s": 3600.0}
    resp = client.get("/v1/budgets.csv", params=params)
    values, rows = _parse(resp.text)
    assert values["caution"] == CAUTION
    # the summary block stays when the series is asked for
    assert float(values["mean_rate_us_per_day"]) == pytest.approx(
        client.post("/v1/budgets", json=_json_body(params)).json()["mean_rate_us_per_day"], rel=1e-15)
    assert list(rows[0]) == ["time_utc", "elapsed_s", "offset_ns", "periodic_ns", "eccentricity_term_ns"]
    assert len(rows) == 25  # 0, 1 h, ..., 24 h
    assert [float(r["elapsed_s"]) for r in rows] == [3600.0 * k for k in range(25)]
    assert rows[0]["time_utc"] == "2027-03-01T00:00:00.000000Z"
    budget = client.post("/v1/budgets", json=_json_body(params)).json()
    assert [float(r["offset_ns"]) for r in rows] == budget["series"]["offset_ns"]


def test_single_field_is_the_json_number(client):
    budget = client.post("/v1/budgets", json=_json_body(CIRCULAR)).json()
    for name in ("mean_rate_us_per_day", "mean_fractional_rate", "terms_fractional.velocity",
                 "periodic.amplitude_ns", "nodes_used"):
        resp = client.get("/v1/budgets.csv", params={**CIRCULAR, "field": name})
        assert resp.status_code == 200
        assert resp.headers["content-type"].startswith("text/plain")
        assert float(resp.text) == lookup(budget, name), name
        assert "Planning estimate" in resp.headers["x-taubudget-caution"]  # the caution travels
    # tiny fractional values come out in scientific notation
    text = client.get("/v1/budgets.csv", params={**CIRCULAR, "field": "mean_fractional_rate"}).text
    assert "e-10" in text and math.isfinite(float(text))


def test_field_without_value_is_422(client, problem_of):
    p = problem_of(client.get("/v1/budgets.csv", params={**CIRCULAR, "field": "preset_frequency_hz"}), 422)
    assert p["errors"][0]["parameter"] == "field"
    assert "nominal_frequency_hz" in p["detail"]


def test_summary_fields_cover_the_budget(client):
    """Every scalar of the budget JSON can be asked for by field=, and no listed field is stale."""
    params = {**CIRCULAR, "eccentricity": 0.01, "nominal_frequency_hz": 10.23e6}
    body = {**_json_body(params), "nominal_frequency_hz": 10.23e6}
    budget = client.post("/v1/budgets", json=body).json()
    scalars = set()
    for key, value in budget.items():
        if isinstance(value, dict) and key not in ("model",):
            scalars |= {f"{key}.{k}" for k, v in value.items() if not isinstance(v, dict | list)
                        and k != "formula"}
        elif not isinstance(value, dict | list) and key not in ("caution", "series"):
            scalars.add(key)
    assert scalars == set(SUMMARY_FIELDS)


def test_tle_request_fits_in_a_short_url(client, tle_lines):
    line1, line2 = tle_lines()
    params = {"tle_line1": line1, "tle_line2": line2, "reference": "GPS",
              "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "earth_zonal_degree": 4,
              "sun": True, "moon": True, "nominal_frequency_hz": 10230000.0,
              "field": "preset_frequency_hz"}
    url = str(client.build_request("GET", "/v1/budgets.csv", params=params).url)
    assert len(url) < URL_LIMIT_CHARS
    resp = client.get(url)
    assert resp.status_code == 200, resp.text
    # An invented near-GPS TLE: the preset sits within 0.01 Hz of IS-GPS-200's 10.22999999543 MHz
    # (the SGP4 mean orbit, zonal and tidal terms move it by parts in 1e-12 of 10.23 MHz).
    assert float(resp.text) == pytest.approx(10.22999999543e6, abs=0.01)


def test_surface_clock_from_query(client):
    params = {"latitude_deg": 45.0, "longitude_deg": 7.0, "height_m": 1000.0,
              "geoid_undulation_m": 0.0, "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
              "field": "mean_fractional_rate"}
    resp = client.get("/v1/budgets.csv", params=params)
    assert resp.status_code == 200, resp.text
    # A clock 1000 m above the geoid runs ~1.09e-13 fast on TT (g h / c^2, DESIGN.md).
    assert float(resp.text) == pytest.approx(1.09e-13, rel=0.02)


def test_query_errors_name_the_parameters(client, problem_of):
    params = {**CIRCULAR, "eccentricity": -0.1, "colour": "red"}
    p = problem_of(client.get("/v1/budgets.csv", params=params), 422)
    assert {e["parameter"] for e in p["errors"]} == {"colour"}  # unknown names first, from FastAPI
    p = problem_of(client.get("/v1/budgets.csv", params={**CIRCULAR, "eccentricity": -0.1}), 422)
    assert [(e["parameter"], e["pointer"]) for e in p["errors"]] == [("eccentricity", "/orbit/eccentricity")]


def test_query_physics_error_names_the_parameter(client, problem_of):
    p = problem_of(client.get("/v1/budgets.csv", params={**CIRCULAR, "semi_major_axis_km": 6000}), 422)
    assert [(e["parameter"], e["pointer"]) for e in p["errors"]] == [
        ("semi_major_axis_km", "/orbit/semi_major_axis_km")]
    assert "perigee" in p["detail"].lower()


def test_query_missing_start_and_mixed_orbits(client, problem_of):
    params = {k: v for k, v in CIRCULAR.items() if k != "start"}
    p = problem_of(client.get("/v1/budgets.csv", params=params), 422)
    assert [e["parameter"] for e in p["errors"]] == ["start"]
    p = problem_of(client.get("/v1/budgets.csv", params={**CIRCULAR, "latitude_deg": 10.0}), 422)
    assert {e["parameter"] for e in p["errors"]} == {"latitude_deg", "semi_major_axis_km",
                                                     "eccentricity", "inclination_deg"}
