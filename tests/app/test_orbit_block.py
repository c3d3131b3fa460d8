"""The response's ``model.orbit`` block: physics describes each orbit in SI (metres, skyfield
Times), app/present/budget.orbit writes the response's km and ISO UTC text. Each block is checked
against values recomputed from the request itself (closed forms: vis-viva for a state vector's
semi-major axis, the TLE epoch field's year and day of year, the OEM's first and last epochs)."""

from __future__ import annotations

import copy
import math
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest
from taubudget.app.schemas.examples import (
    EXAMPLE_GROUND_REQUEST,
    EXAMPLE_HELIOCENTRIC_REQUEST,
    EXAMPLE_LEO_J2_REQUEST,
    EXAMPLE_REQUEST,
)

GM_EARTH_KM3_PER_S2 = 398600.4418  # GM_E, IERS Conventions (2010) TN36 Table 1.1
EPOCH = datetime(2027, 3, 1, tzinfo=UTC)


def _iso_us(t: datetime) -> str:
    return t.strftime("%Y-%m-%dT%H:%M:%S.%fZ")


def _budget(client, orbit: dict, start: str, end: str, zonal: int = 0) -> dict:
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body.update(orbit=orbit, start=start, end=end, series_step_s=600)
    body["gravity"]["earth_zonal_degree"] = zonal
    resp = client.post("/v1/budgets", json=body)
    assert resp.status_code == 200, resp.text
    return resp.json()["model"]["orbit"]


def test_keplerian_mean_elements_block(client):
    """Brouwer mean elements given: the block repeats the request's mean a (km) and inclination."""
    req = copy.deepcopy(EXAMPLE_LEO_J2_REQUEST)
    resp = client.post("/v1/budgets", json=req)
    assert resp.status_code == 200, resp.text
    orbit = resp.json()["model"]["orbit"]
    assert orbit["type"] == "keplerian" and orbit["element_type"] == "mean"
    assert orbit["mean_semi_major_axis_km"] == pytest.approx(req["orbit"]["semi_major_axis_km"], rel=1e-12)
    assert orbit["mean_eccentricity"] == pytest.approx(req["orbit"]["eccentricity"], rel=1e-9)
    a_km = req["orbit"]["semi_major_axis_km"]
    two_body_period_s = 2 * math.pi * math.sqrt(a_km**3 / GM_EARTH_KM3_PER_S2)
    # J2 shifts the period by about (3/2) J2 (R/a)^2 ~ 1e-3
    assert orbit["period_s"] == pytest.approx(two_body_period_s, rel=5e-3)


def test_state_vector_block(client):
    """Osculating a from vis-viva 1/a = 2/r - v^2/GM; the epoch text is the request's epoch."""
    r = np.array([7000.0, 0.0, 0.0])
    v = np.array([0.0, 7.5, 1.0])
    epoch = "2027-03-01T00:00:00Z"
    orbit = _budget(client, {"type": "state_vector", "epoch": epoch, "position_gcrs_km": r.tolist(),
                             "velocity_gcrs_km_per_s": v.tolist()},
                    "2027-03-01T00:00:00Z", "2027-03-01T06:00:00Z")
    a_km = 1.0 / (2.0 / np.linalg.norm(r) - v @ v / GM_EARTH_KM3_PER_S2)
    assert orbit["osculating_semi_major_axis_km"] == pytest.approx(a_km, rel=1e-9)
    assert orbit["epoch_utc"] == _iso_us(EPOCH)
    e_vec = ((v @ v - GM_EARTH_KM3_PER_S2 / np.linalg.norm(r)) * r - (r @ v) * v) / GM_EARTH_KM3_PER_S2
    assert orbit["osculating_eccentricity"] == pytest.approx(np.linalg.norm(e_vec), rel=1e-9)
    inc = math.degrees(math.acos(np.cross(r, v)[2] / np.linalg.norm(np.cross(r, v))))
    assert orbit["osculating_inclination_deg"] == pytest.approx(inc, abs=1e-9)


def test_tle_block(client, tle_lines):
    """The TLE epoch field 27060.25 is 2027, day 60.25: 1 March 2027 06:00 UTC."""
    line1, line2 = tle_lines(epoch="27060.25000000")
    orbit = _budget(client, {"type": "tle", "line1": line1, "line2": line2},
                    "2027-03-01T06:00:00Z", "2027-03-01T12:00:00Z")
    expected = datetime(2027, 1, 1, tzinfo=UTC) + timedelta(days=60.25 - 1)
    assert orbit["tle_epoch_utc"] == _iso_us(expected)
    assert orbit["satellite_number"] == "99901"
    assert orbit["period_s"] == pytest.approx(86400.0 / 2.00561, rel=2e-3)  # mean motion, rev/day


def test_oem_block(client):
    """Each segment's start and stop text are the file's first and last epochs."""
    times = [EPOCH + timedelta(seconds=s) for s in range(0, 6 * 3600 + 1, 300)]
    r_km, w = 7000.0, math.sqrt(GM_EARTH_KM3_PER_S2 / 7000.0**3)  # circular, closed form
    lines = ["CCSDS_OEM_VERS = 3.0", "CREATION_DATE = 2027-02-27T00:00:00", "ORIGINATOR = KESTREL OPS", "",
             "META_START", "OBJECT_NAME = KESTREL-NAV-3", "OBJECT_ID = 2027-901C", "CENTER_NAME = EARTH",
             "REF_FRAME = GCRF", "TIME_SYSTEM = UTC", f"START_TIME = {times[0]:%Y-%m-%dT%H:%M:%S}",
             f"STOP_TIME = {times[-1]:%Y-%m-%dT%H:%M:%S}", "INTERPOLATION = LAGRANGE",
             "INTERPOLATION_DEGREE = 7", "META_STOP", ""]
    for t in times:
        ph = w * (t - EPOCH).total_seconds()
        lines.append(f"{t:%Y-%m-%dT%H:%M:%S} {r_km * math.cos(ph):.9f} {r_km * math.sin(ph):.9f} 0.0 "
                     f"{-r_km * w * math.sin(ph):.12f} {r_km * w * math.cos(ph):.12f} 0.0")
    orbit = _budget(client, {"type": "oem", "text": "\n".join(lines) + "\n"},
                    "2027-03-01T01:00:00Z", "2027-03-01T05:00:00Z")
    (seg,) = orbit["segments"]
    assert (seg["start_utc"], seg["stop_utc"]) == ("2027-03-01T00:00:00Z", "2027-03-01T06:00:00Z")
    assert seg["points"] == len(times)
    est = orbit["interpolation_error_estimate"]
    assert set(est) == {"method", "max_position_m", "max_velocity_m_per_s", "max_fractional_rate",
                        "max_periodic_term_ns"}
    # (2/c^2)(|dr| v + r |dv|) bounds the periodic-term error (ephemeris_table's docstring)
    c2 = 299792458.0**2
    r_m, v_m_per_s = r_km * 1e3, r_km * w * 1e3
    bound_ns = 2 / c2 * (est["max_position_m"] * v_m_per_s + r_m * est["max_velocity_m_per_s"]) * 1e9
    assert est["max_periodic_term_ns"] <= bound_ns * (1 + 1e-9)


@pytest.mark.parametrize("example", [EXAMPLE_GROUND_REQUEST, EXAMPLE_HELIOCENTRIC_REQUEST],
                         ids=["surface", "heliocentric"])
def test_blocks_without_unit_conversion_repeat_the_request(client, example):
    resp = client.post("/v1/budgets", json=example)
    assert resp.status_code == 200, resp.text
    orbit = resp.json()["model"]["orbit"]
    for key in ("latitude_deg", "longitude_deg", "height_m", "geoid_undulation_m", "center",
                "reference_plane"):
        if key in example["orbit"]:
            assert orbit[key] == example["orbit"][key], key


def _walk(value, path=""):
    if isinstance(value, dict):
        for k, v in value.items():
            yield f"{path}.{k}", v
            yield from _walk(v, f"{path}.{k}")
    elif isinstance(value, list):
        for i, v in enumerate(value):
            yield from _walk(v, f"{path}[{i}]")


def test_physics_descriptions_are_si_without_time_text(tle_lines):
    """physics' describe(): metres and seconds in the key names, times as skyfield Times; the km,
    ns and ISO text above are written by the presenter only."""
    import re

    from taubudget.app.schemas import BudgetRequest
    from taubudget.app.schemas.orbits import GravityIn
    from taubudget.app.services.orbits import build_source

    line1, line2 = tle_lines(epoch="27060.25000000")
    orbits = [EXAMPLE_LEO_J2_REQUEST["orbit"], EXAMPLE_GROUND_REQUEST["orbit"],
              EXAMPLE_HELIOCENTRIC_REQUEST["orbit"], {"type": "tle", "line1": line1, "line2": line2},
              {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z", "position_gcrs_km": [7000.0, 0, 0],
               "velocity_gcrs_km_per_s": [0.0, 7.5, 1.0]}]
    iso = re.compile(r"\d{4}-\d\d-\d\dT\d\d:\d\d")
    for block in orbits:
        body = {**copy.deepcopy(EXAMPLE_REQUEST), "orbit": block}
        orbit = BudgetRequest.model_validate(body, strict=False).orbit
        described = build_source(orbit, gravity=GravityIn(earth_zonal_degree=4)).describe()
        for key, value in _walk(described):
            assert not re.search(r"_(km|ns|us|utc)$", key), (block["type"], key)
            assert not (isinstance(value, str) and iso.search(value)), (block["type"], key, value)
        if block["type"] == "state_vector":
            assert described["osculating_semi_major_axis_m"] > 7e6
            assert described["epoch"].utc_strftime("%Y-%m-%d") == "2027-03-01"
        if block["type"] == "tle":
            assert described["tle_epoch"].utc_strftime("%H:%M") == "06:00"
