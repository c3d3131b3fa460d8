"""A state vector (or OPM) without its own force_model is propagated under the budget's gravity block.

Check value: a circular orbit of radius 26,561.4 km in a point-mass field, against TT, runs
38.575008 us/day fast (Kouba 2004, GPS Solutions 8(3); the README's GPS figure). Given as a GCRS
state vector with the same point-mass gravity block, the budget must reproduce it: the trajectory
and the clock's rate then see one field. (When the trajectory was propagated with J2..J6, Sun and
Moon while the rate used a point-mass Earth, the answer was 38.57374, 1.3 ns/day off.)
"""

from __future__ import annotations

import copy
import math

import pytest
from taubudget.app.schemas import EXAMPLE_REQUEST

KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_DIGITS_US_PER_DAY = 5e-7  # the figure is published to 1e-6 us/day
GM_EARTH_KM3_PER_S2 = 398600.4418  # IERS Conventions (2010) TN36 Table 1.1 (TCG-compatible)
RADIUS_KM = 26561.4


def _circular_state(incl_deg: float = 55.0) -> dict:
    v = math.sqrt(GM_EARTH_KM3_PER_S2 / RADIUS_KM)  # circular speed, two-body closed form
    i = math.radians(incl_deg)
    return {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
            "position_gcrs_km": [RADIUS_KM, 0.0, 0.0],
            "velocity_gcrs_km_per_s": [0.0, v * math.cos(i), v * math.sin(i)]}


def _request(orbit: dict) -> dict:
    req = copy.deepcopy(EXAMPLE_REQUEST)  # point-mass gravity, one day against TT
    req["orbit"] = orbit
    req.pop("series_step_s")
    return req


def test_state_vector_follows_the_gravity_block(client):
    out = client.post("/v1/budgets", json=_request(_circular_state())).json()
    assert out["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                        abs=PUBLISHED_DIGITS_US_PER_DAY)
    assert "forces: point-mass Earth;" in out["model"]["orbit"]["propagation"]


def test_an_explicit_force_model_still_drives_the_trajectory(client):
    orbit = {**_circular_state(), "force_model": {"earth_zonal_degree": 6, "sun": True, "moon": True}}
    out = client.post("/v1/budgets", json=_request(orbit)).json()
    assert "EGM2008 zonal J2..J6, Sun, Moon" in out["model"]["orbit"]["propagation"]
    # J2 makes the 'circular' state slightly eccentric and changes its energy: the answer moves
    # by about 1 ns/day, far above the figure's published digits.
    assert abs(out["mean_rate_us_per_day"] - KOUBA_RATE_US_PER_DAY) > 1e-4


def _opm(incl_deg: float = 55.0) -> str:
    """A KVN OPM (CCSDS 502.0-B-3 section 3) of an invented navigation satellite, same state."""
    sv = _circular_state(incl_deg)
    r, v = sv["position_gcrs_km"], sv["velocity_gcrs_km_per_s"]
    lines = ["CCSDS_OPM_VERS = 3.0", "CREATION_DATE = 2027-02-28T12:00:00", "ORIGINATOR = TAUBUDGET TESTS",
             "OBJECT_NAME = LARKSPUR-NAV-1", "OBJECT_ID = 2027-903A", "CENTER_NAME = EARTH",
             "REF_FRAME = GCRF", "TIME_SYSTEM = UTC", "EPOCH = 2027-03-01T00:00:00"]
    lines += [f"{k} = {x:.12f} [km]" for k, x in zip(("X", "Y", "Z"), r, strict=True)]
    lines += [f"{k} = {x:.15f} [km/s]" for k, x in zip(("X_DOT", "Y_DOT", "Z_DOT"), v, strict=True)]
    return "\n".join(lines) + "\n"


def test_an_opm_upload_follows_the_gravity_block(client):
    form = {"reference": "TT", "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
            "gravity": '{"earth_zonal_degree": 0, "sun": false, "moon": false}'}
    resp = client.post("/v1/budgets", files={"file": ("larkspur.opm", _opm().encode())}, data=form)
    assert resp.status_code == 200, resp.text
    out = resp.json()
    assert out["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                        abs=PUBLISHED_DIGITS_US_PER_DAY)
    assert "forces: point-mass Earth;" in out["model"]["orbit"]["propagation"]


def test_a_batch_shares_one_state_per_gravity_block(client):
    """Items sharing the defaults' state vector under different gravity blocks each get theirs."""
    body = {"defaults": _request(_circular_state()),
            "items": [{"id": "point-mass"},
                      {"id": "full", "gravity": {"earth_zonal_degree": 4, "sun": True, "moon": True}}]}
    out = client.post("/v1/budgets/batch", json=body).json()
    by_id = {r["id"]: r["budget"] for r in out["items"]}
    assert by_id["point-mass"]["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                                       abs=PUBLISHED_DIGITS_US_PER_DAY)
    assert "point-mass Earth;" in by_id["point-mass"]["model"]["orbit"]["propagation"]
    assert "EGM2008 zonal J2..J4, Sun, Moon" in by_id["full"]["model"]["orbit"]["propagation"]


def test_the_openapi_document_names_the_forces_a_budget_without_gravity_gets(client):
    """The force_model description tells a budget request that omits both blocks which field
    propagates its state: the response's own propagation text is the check."""
    req = _request(_circular_state())
    req.pop("gravity")
    propagation = client.post("/v1/budgets", json=req).json()["model"]["orbit"]["propagation"]
    forces = propagation.split("forces: EGM2008 zonal ")[1].split(",")[0]  # e.g. "J2..J4"
    schemas = client.get("/openapi.json").json()["components"]["schemas"]
    for name in ("StateVectorOrbitIn", "OpmOrbitIn"):
        assert forces in schemas[name]["properties"]["force_model"]["description"], name
    # the gravity block says it sets those forces too
    assert "force_model" in schemas["GravityIn"]["description"]
