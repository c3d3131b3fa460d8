"""Physics errors reach the user in the request's terms.

physics/ names its own parameters in SI (``r_gcrs_m`` in m, ``geoid_undulation_m``, ``coverage``)
and writes no calendar text; the app maps each error to the request block that caused it (the
clock's orbit, a reference clock, a link station, station i of a contact plan, an orbit file's
text), in the request's unit, with instants in UTC. Each case goes through the HTTP API (or the
CLI) and checks the JSON pointer, the value as the user wrote it, and the physical reason.
"""

from __future__ import annotations

import copy
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from support.budgets import LEO_TLE
from taubudget.app.formats.models import StateVectorOrbitIn
from taubudget.app.present.errors import shown
from taubudget.app.schemas import EXAMPLE_REQUEST
from taubudget.app.services.request_terms import request_error, request_terms
from taubudget.physics.ephemeris import timescale
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits.numerical import MAX_PROPAGATION_DAYS, NumericalOrbit
from taubudget.physics.span import Span

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
START = "2027-03-01T00:00:00Z"


def _sample(name):
    return json.loads((SAMPLES / name).read_text())


def _error(problem: dict) -> dict:
    assert len(problem["errors"]) == 1, problem
    return problem["errors"][0]


def _state_vector(r_km, v_km_s):
    return {"type": "state_vector", "epoch": START, "position_gcrs_km": r_km,
            "velocity_gcrs_km_per_s": v_km_s}


def test_state_vector_inside_the_earth_names_the_position_in_km(client, request_body, problem_of):
    request_body["orbit"] = _state_vector([6000.0, 0.0, 0.0], [0.0, 7.5, 0.0])
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/orbit/position_gcrs_km"
    # the value as the request wrote it (km), not physics' metres
    assert "orbit.position_gcrs_km = [6000.0, 0.0, 0.0]" in body["detail"]
    assert "inside the Earth" in body["detail"]


def test_unbound_state_vector_names_the_velocity_in_km_per_s(client, request_body, problem_of):
    # 11.0 km/s at 7000 km is above the escape speed sqrt(2 GM/r) = 10.67 km/s (closed form)
    request_body["orbit"] = _state_vector([7000.0, 0.0, 0.0], [0.0, 11.0, 0.0])
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/orbit/velocity_gcrs_km_per_s"
    assert "[0.0, 11.0, 0.0]" in body["detail"] and "not bound" in body["detail"]


def test_surface_clock_undulation_out_of_range(client, problem_of):
    req = _sample("mountain_ground_clock.json")
    req["orbit"]["geoid_undulation_m"] = 150.0
    body = problem_of(client.post("/v1/budgets", json=req), 422)
    assert _error(body)["pointer"] == "/orbit/geoid_undulation_m"
    assert "150" in body["detail"] and "outside the Earth's range" in body["detail"]


def test_reference_clock_contradiction_names_the_reference(client, request_body, problem_of):
    request_body["reference"] = {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0,
                                 "height_m": 100.0, "orthometric_height_m": 50.0, "geoid_undulation_m": 20.0}
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/reference/orthometric_height_m"
    assert "contradicts" in body["detail"]


def test_link_station_error_names_the_link_station(client, request_body, problem_of):
    request_body["link_station"] = {"type": "surface", "latitude_deg": -30.2, "longitude_deg": 149.1,
                                    "geoid_undulation_m": -200.0}
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/link_station/geoid_undulation_m"


def test_contact_plan_station_error_names_its_index(client, problem_of):
    # The schema bounds the undulation; over HTTP the pointer comes from validation ...
    req = _sample("contact_plan_meo.json")
    req["stations"][1]["geoid_undulation_m"] = 200.0
    body = problem_of(client.post("/v1/contact-plans", json=req), 422)
    assert _error(body)["pointer"] == "/stations/1/geoid_undulation_m"
    # ... and a value only physics refuses (an unvalidated station, as a script could build it)
    # is mapped to the same station by its index.
    from taubudget.app.schemas.contacts import ContactPlanRequest
    from taubudget.app.services.contacts import _stations

    plan = ContactPlanRequest.model_validate(_sample("contact_plan_meo.json"))
    bad = plan.stations[1].model_copy(update={"elevation_mask_deg": 95.0})
    plan = plan.model_copy(update={"stations": [plan.stations[0], bad]})
    with pytest.raises(PhysicsInputError) as info:
        _stations(plan)
    assert (info.value.field, info.value.value) == ("stations.1.elevation_mask_deg", 95.0)


def _oem(first_min: int = 0, last_min: int = 20) -> str:
    """A KVN OEM (CCSDS 502.0-B-3 section 5) of an invented satellite: a circular orbit at 7000 km
    sampled every 5 minutes (two-body closed form)."""
    r, gm = 7000.0, 398600.4418  # GM_E km^3/s^2, IERS Conventions (2010) TN36 Table 1.1
    n = np.sqrt(gm / r**3)
    lines = ["CCSDS_OEM_VERS = 3.0", "CREATION_DATE = 2027-02-28T12:00:00", "ORIGINATOR = TAUBUDGET TESTS",
             "",
             "META_START", "OBJECT_NAME = WREN-CLOCK-2", "OBJECT_ID = 2027-902B", "CENTER_NAME = EARTH",
             "REF_FRAME = GCRF", "TIME_SYSTEM = UTC", f"START_TIME = 2027-03-01T00:{first_min:02d}:00",
             f"STOP_TIME = 2027-03-01T00:{last_min:02d}:00", "INTERPOLATION = LAGRANGE",
             "INTERPOLATION_DEGREE = 3", "META_STOP", ""]
    for m in range(first_min, last_min + 1, 5):
        th = n * 60.0 * m
        pos = (r * np.cos(th), r * np.sin(th), 0.0)
        vel = (-r * n * np.sin(th), r * n * np.cos(th), 0.0)
        lines.append(f"2027-03-01T00:{m:02d}:00 " + " ".join(f"{x:.9f}" for x in pos) + " "
                     + " ".join(f"{x:.12f}" for x in vel))
    return "\n".join(lines) + "\n"


def test_oem_coverage_error_points_at_the_text_with_utc_times(client, request_body, problem_of):
    # The span (1 h) outlasts the file's 20 minutes of data: refused, never extrapolated.
    request_body["orbit"] = {"type": "oem", "text": _oem()}
    request_body.pop("end", None)
    request_body["duration_days"] = 1.0 / 24.0
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    err = _error(body)
    assert err["pointer"] == "/orbit/text"
    assert "never extrapolated" in body["detail"]
    assert "the data cover 2027-03-01T00:00:00Z to 2027-03-01T00:20:00Z" in body["detail"]
    # the span's end and the data's last point, in UTC, and how far apart (60 min - 20 min); the
    # file's text has no value to quote
    assert ("span's end (2027-03-01T01:00:00Z) lies 2400 s after the data's last point "
            "(2027-03-01T00:20:00Z)") in body["detail"]
    assert "orbit.text =" not in body["detail"]


def test_tle_far_from_its_epoch_names_the_start_in_utc(client, request_body, problem_of):
    request_body["orbit"] = {"type": "tle", "line1": LEO_TLE[0], "line2": LEO_TLE[1]}
    request_body["start"], request_body["end"] = "2029-06-01T00:00:00Z", "2029-06-02T00:00:00Z"
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/start"
    assert "start = '2029-06-01T00:00:00Z'" in body["detail"] and "TLE epoch" in body["detail"]


def test_numerical_propagation_limit_names_the_state_vector_epoch():
    """A runtime error of a source (raised while it is evaluated) maps to the block that built it;
    the state vector's epoch is written in UTC. (The service's cost check refuses such spans
    before any work; this is the physics limit behind it.)"""
    ts = timescale()
    t0 = ts.utc(2027, 3, 1)
    src = NumericalOrbit(t0, [7.0e6, 0.0, 0.0], [0.0, 7546.05, 0.0], zonal_degree=0, sun=False, moon=False)
    span = Span(ts.utc(2027, 3, 1 + int(MAX_PROPAGATION_DAYS) + 5), 3600.0)
    model = StateVectorOrbitIn.model_validate(_state_vector([7000.0, 0.0, 0.0], [0.0, 7.54605, 0.0]))
    with pytest.raises(PhysicsInputError) as info:
        with request_terms((object(), "reference", None), (src, "orbit", model)):
            src.states(span, np.array([0.0, 60.0]))
    field, value, reason = shown(info.value)
    assert field == "orbit.epoch" and value == "2027-03-01T00:00:00Z"
    assert "numerical propagation is limited" in reason
    # an error from a source not in play passes unchanged
    other = PhysicsInputError("coverage", None, "x", source=object())
    assert request_error(other, "orbit", model).field == "orbit.coverage"


def test_state_vector_zonal_degree_maps_to_its_own_force_model():
    exc = PhysicsInputError("zonal_degree", 9, "zonal degree must be 0 or 2..6")
    assert request_error(exc, "orbit", StateVectorOrbitIn).field == "orbit.force_model.earth_zonal_degree"
    # a Keplerian orbit follows the budget's gravity block
    from taubudget.app.schemas.orbits import KeplerianOrbitIn

    assert request_error(exc, "orbit", KeplerianOrbitIn).field == "gravity.earth_zonal_degree"


def test_cli_writes_the_instant_in_utc(tmp_path):
    req = copy.deepcopy(EXAMPLE_REQUEST)
    req["orbit"] = {"type": "tle", "line1": LEO_TLE[0], "line2": LEO_TLE[1]}
    req["start"], req["end"] = "2029-06-01T00:00:00Z", "2029-06-02T00:00:00Z"
    path = tmp_path / "far.json"
    path.write_text(json.dumps(req))
    run = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "budget", str(path)],
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 2, run.stderr
    assert "start = '2029-06-01T00:00:00Z'" in run.stderr and "Time" not in run.stderr


def test_opm_epoch_far_from_the_span_names_the_epoch_in_utc(client, request_body, problem_of):
    """The cost check refuses an OPM a year from the span; the OPM's epoch (its EPOCH keyword,
    2027-03-01T00:00:00.000Z in the sample file) reaches the user in UTC, as a state vector's does."""
    request_body["orbit"] = {"type": "opm", "text": (SAMPLES / "formats" / "kestrel_nav3.opm").read_text()}
    request_body["start"], request_body["end"] = "2028-03-01T00:00:00Z", "2028-03-02T00:00:00Z"
    body = problem_of(client.post("/v1/budgets", json=request_body), 422)
    assert _error(body)["pointer"] == "/orbit/text"
    assert "integrated numerically from its epoch" in body["detail"]
    assert "2027-03-01T00:00:00Z" in body["detail"] and "Time" not in body["detail"]


def test_cli_clock_residuals_names_the_instant_the_orbit_file_misses(tmp_path):
    """A RINEX clock file whose epochs (moved three days on) lie after the SP3 orbit's coverage:
    exit 2, naming the orbit file's text and the first clock epoch the orbit misses, in UTC. The
    files' epochs are GPS time; UTC is 18 s behind it in 2027 (TAI - UTC = 37 s since 2017-01-01,
    IERS Bulletin C 52; GPS = TAI - 19 s, IS-GPS-200 section 3.3.4), so 2027-03-04 00:00:00 GPS
    is 2027-03-03T23:59:42Z."""
    clk = (SAMPLES / "formats" / "kestrel_constellation_304.clk").read_text().splitlines()
    moved = [ln.replace(" 2027 03 02 ", " 2027 03 05 ").replace(" 2027 03 01 ", " 2027 03 04 ")
             if ln.startswith("AS ") else ln for ln in clk]
    path = tmp_path / "moved.clk"
    path.write_text("\n".join(moved) + "\n")
    run = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "clock-residuals", str(path),
                          "--orbit", str(SAMPLES / "formats" / "kestrel_constellation.sp3"), "--sat", "L51"],
                         capture_output=True, text=True, timeout=120)
    assert run.returncode == 2, run.stderr
    assert "orbit_file.text" in run.stderr and "never extrapolated" in run.stderr
    assert "2027-03-03T23:59:42Z" in run.stderr and "Time" not in run.stderr
    assert "kestrel_constellation.sp3" in run.stderr  # the file the error is about, by its path
