"""POST /v1/budgets: results against published values, and every error path.

Outside references:
- Kouba (2004), GPS Solutions 8(3):170-180: a circular orbit of a = 26,561.4 km around a
  point-mass Earth (GM = 3.986004418e14) gains 38,575.008 ns/day on TT; the factory
  offset of the oscillator is -4.4647e-10 (IS-GPS-200: 10.22999999543 MHz for 10.23 MHz).
- IERS TN36 section 10.2: the eccentricity term has an amplitude of ~2.29 us x e at GPS
  altitude.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from taubudget.physics.budget import CAUTION

# Published to the ns/day digit of 38,575.008 ns/day: half a unit is 5e-7 us/day.
KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_RATE_ROUNDING_US_PER_DAY = 1e-6
# -4.4647e-10 is published to five figures: half a unit in the last is 5e-15.
GPS_PRESET_FRACTIONAL = -4.4647e-10
PUBLISHED_PRESET_ROUNDING = 5e-15
# 10.22999999543 MHz is published to 1e-5 Hz.
GPS_PRESET_HZ = 10.22999999543e6
PUBLISHED_HZ_ROUNDING = 1e-5
# "~2.29 us x e" has three figures: 0.5 % covers its rounding.
ECC_AMPLITUDE_US_PER_UNIT_E = 2.29
THREE_FIGURES = 5e-3


def test_circular_gps_orbit_matches_kouba(client, request_body):
    resp = client.post("/v1/budgets", json=request_body)
    assert resp.status_code == 200
    b = resp.json()
    assert b["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                      abs=PUBLISHED_RATE_ROUNDING_US_PER_DAY)
    assert b["frequency_preset_fractional"] == pytest.approx(GPS_PRESET_FRACTIONAL,
                                                             abs=PUBLISHED_PRESET_ROUNDING)
    assert b["preset_frequency_hz"] == pytest.approx(GPS_PRESET_HZ, abs=PUBLISHED_HZ_ROUNDING)
    assert b["caution"] == CAUTION
    # One day at 900 s: 97 output times, the offset grows (clock gains on TT).
    assert len(b["series"]["time_utc"]) == 97
    assert b["series"]["offset_ns"][-1] > b["series"]["offset_ns"][1] > 0


def test_eccentricity_amplitude_matches_tn36(client, request_body):
    e = 0.02
    request_body["orbit"]["eccentricity"] = e
    b = client.post("/v1/budgets", json=request_body).json()
    expected_ns = ECC_AMPLITUDE_US_PER_UNIT_E * e * 1e3
    assert b["eccentricity_correction"]["amplitude_ns"] == pytest.approx(expected_ns, rel=THREE_FIGURES)


def test_response_is_the_cli_json(client, request_body, tmp_path):
    """The route returns exactly what `taubudget budget --json` prints for the same file."""
    path = tmp_path / "req.json"
    path.write_text(json.dumps(request_body))
    out = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "budget", str(path), "--json"],
                         capture_output=True, text=True, check=True)
    assert client.post("/v1/budgets", json=request_body).json() == json.loads(out.stdout)


@pytest.mark.parametrize("content_type", [None, "text/plain", "application/x-www-form-urlencoded"])
def test_json_without_json_content_type(client, request_body, content_type):
    headers = {"content-type": content_type} if content_type else {}
    resp = client.post("/v1/budgets", content=json.dumps(request_body).encode(), headers=headers)
    assert resp.status_code == 200, resp.text
    assert resp.json()["caution"] == CAUTION


def test_perigee_below_surface(client, request_body, problem_of, pointers_of):
    request_body["orbit"].update(semi_major_axis_km=7000.0, eccentricity=0.13)  # rp = 6090 km
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p) == ["/orbit/semi_major_axis_km"]
    assert p["errors"][0]["detail"] == "perigee radius 6090 km is below the Earth's equatorial radius 6378 km"
    assert p["detail"].startswith("Perigee radius 6090 km")


def test_hyperbolic_eccentricity(client, request_body, problem_of, pointers_of):
    request_body["orbit"]["eccentricity"] = 1.3
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p) == ["/orbit/eccentricity"]
    assert "hyperbolic" in p["detail"]


def test_span_beyond_ephemeris(client, request_body, problem_of, pointers_of):
    request_body["start"] = request_body["orbit"]["epoch"] = "2060-01-01T00:00:00Z"
    request_body["end"] = "2060-01-02T00:00:00Z"
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p)[0] in ("/start", "/end")
    assert "DE421" in p["detail"]
    # the offending instant is named, in UTC, at either end of the ephemeris
    assert "= '2060-01-02T00:00:00Z'" in p["detail"]


def test_span_over_limit_names_the_limit(small_client, request_body, problem_of, pointers_of):
    request_body.pop("end")
    request_body["duration_days"] = 5.0  # small_client allows 3 days
    p = problem_of(small_client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p) == ["/duration_days"]
    assert "limit of 3 days" in p["detail"]


def test_series_points_over_limit(small_client, request_body, problem_of, pointers_of):
    request_body["series_step_s"] = 60.0  # 1441 points; small_client allows 500
    p = problem_of(small_client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p) == ["/series_step_s"]
    assert "500" in p["detail"]


def test_unknown_fields_are_named(client, request_body, problem_of, pointers_of):
    request_body["orbit"]["semi_major_axis_m"] = 26561400.0
    request_body["colour"] = "blue"
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert sorted(pointers_of(p)) == ["/colour", "/orbit/semi_major_axis_m"]
    assert all("unknown field" in e["detail"] for e in p["errors"])


def test_missing_and_wrong_type_fields(client, request_body, problem_of, pointers_of):
    del request_body["orbit"]["epoch"]
    request_body["orbit"]["inclination_deg"] = "steep"
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert sorted(pointers_of(p)) == ["/orbit/epoch", "/orbit/inclination_deg"]


def test_bad_reference_gives_one_error(client, request_body, problem_of, pointers_of):
    request_body["reference"] = "UTC"
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert pointers_of(p) == ["/reference"]
    assert "'TT'" in p["errors"][0]["detail"]


def test_both_end_and_duration(client, request_body, problem_of):
    request_body["duration_days"] = 1.0
    p = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert "not both" in p["detail"]


def test_surface_reference_clock(client, request_body):
    """A ground clock as reference: the response echoes it and keeps the caution."""
    request_body["reference"] = {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0,
                                 "height_m": 300.0, "geoid_undulation_m": 12.0}
    b = client.post("/v1/budgets", json=request_body).json()
    assert b["reference"]["type"] == "surface"
    # A geoid clock runs ~L_G slower than TCG, close to TT: the satellite still gains ~38.6 us/day.
    assert 38.0 < b["mean_rate_us_per_day"] < 39.0


@pytest.mark.parametrize("raw,why", [
    (b"{\"orbit\": ", "Malformed JSON"),
    (b"", "Empty body"),
    (b"\xff\xfe\x00", "Malformed body"),
    (b'{"orbit": NaN}', "Malformed JSON"),
])
def test_malformed_bodies_are_400(client, problem_of, raw, why):
    p = problem_of(client.post("/v1/budgets", content=raw), 400)
    assert p["title"] == why


def test_body_that_is_not_an_object(client, problem_of, pointers_of):
    p = problem_of(client.post("/v1/budgets", json=[1, 2]), 422)
    assert pointers_of(p) == [""]


def test_body_size_limit(small_client, request_body, problem_of):
    request_body["orbit"]["name_padding"] = "x" * 5000  # over small_client's 4000 bytes
    p = problem_of(small_client.post("/v1/budgets", json=request_body), 413)
    assert p["limit_name"] == "MAX_BODY_BYTES" and p["limit"] == 4000


def test_streamed_body_size_limit(small_client, problem_of):
    """A chunked body (no Content-Length) is counted as it arrives."""

    def chunks():
        yield b'{"orbit": "'
        for _ in range(10):
            yield b"y" * 1000
        yield b'"}'

    p = problem_of(small_client.post("/v1/budgets", content=chunks()), 413)
    assert "4000 bytes" in p["detail"]


def test_unknown_route_and_method_are_problems(client, problem_of):
    problem_of(client.get("/v1/nothing-here"), 404)
    problem_of(client.get("/v1/budgets"), 405)


def test_bug_becomes_500_problem_without_traceback(request_body, problem_of, monkeypatch):
    from fastapi.testclient import TestClient
    from taubudget.app.api import budgets
    from taubudget.app.main import create_app

    def broken(*args, **kwargs):
        raise ZeroDivisionError("secret internal state")

    monkeypatch.setattr(budgets, "budget_from_request", broken)
    with TestClient(create_app(), raise_server_exceptions=False) as c:
        resp = c.post("/v1/budgets", json=request_body)
    p = problem_of(resp, 500)
    assert p["type"].endswith("internal-error")
    assert "secret" not in resp.text and "ZeroDivisionError" not in resp.text
