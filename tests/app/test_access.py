"""Optional API keys and CORS from settings; without keys the service is open and says so."""

from __future__ import annotations

import logging

import pytest
from fastapi.testclient import TestClient
from taubudget.app.main import create_app
from taubudget.app.schemas import EXAMPLE_REQUEST
from taubudget.app.settings import Settings

KEYS = {"planning-desk": "k-7f3a9c1e5b2d4f60a8e1", "night-shift": "k-0b9e8d7c6a5f4e3d2c1b"}
CSV_QUERY = {"latitude_deg": 10.0, "longitude_deg": 20.0, "start": "2027-03-01T00:00:00Z",
             "duration_days": 1.0, "field": "mean_rate_us_per_day"}
ORIGIN = "https://mission-tool.example.org"


@pytest.fixture(scope="module")
def keyed():
    with TestClient(create_app(Settings(API_KEYS=KEYS, CORS_ORIGINS=[ORIGIN]))) as c:
        yield c


def test_v1_routes_need_a_key(keyed, problem_of):
    body = problem_of(keyed.post("/v1/budgets", json=EXAMPLE_REQUEST), 401)
    assert "X-API-Key" in body["detail"]
    assert problem_of(keyed.get("/v1/reference"), 401)["errors"][0]["detail"].endswith("X-API-Key")
    wrong = keyed.post("/v1/budgets", json=EXAMPLE_REQUEST, headers={"X-API-Key": "k-guess"})
    problem_of(wrong, 401)


def test_each_named_key_opens_the_routes(keyed):
    for key in KEYS.values():
        assert keyed.post("/v1/budgets", json=EXAMPLE_REQUEST, headers={"X-API-Key": key}).status_code == 200
    bearer = {"Authorization": f"Bearer {KEYS['night-shift']}"}
    assert keyed.get("/v1/reference", headers=bearer).status_code == 200


def test_spreadsheet_get_routes_take_the_key_as_a_query_parameter(keyed, problem_of):
    resp = keyed.get("/v1/budgets.csv", params={**CSV_QUERY, "api_key": KEYS["planning-desk"]})
    assert resp.status_code == 200, resp.text  # the parameter is consumed, not an unknown field
    float(resp.text)
    # POST routes never take a key from the URL (it would end up in logs for no need).
    post = keyed.post("/v1/budgets", params={"api_key": KEYS["planning-desk"]}, json=EXAMPLE_REQUEST)
    problem_of(post, 401)


def test_probes_and_the_document_stay_open(keyed):
    assert keyed.get("/healthz").status_code == 200
    assert keyed.get("/readyz").status_code == 200
    assert keyed.get("/openapi.json").status_code == 200


def test_without_keys_the_service_is_open_and_says_so(caplog):
    with caplog.at_level(logging.INFO, logger="uvicorn.error"):
        with TestClient(create_app(Settings())) as c:
            assert c.post("/v1/budgets", json=EXAMPLE_REQUEST).status_code == 200
            assert "access-control-allow-origin" not in c.get(
                "/v1/reference", headers={"Origin": ORIGIN}).headers
    assert any("OPEN" in r.getMessage() for r in caplog.records)


def test_with_keys_the_log_names_them_but_never_shows_them(caplog):
    with caplog.at_level(logging.INFO, logger="uvicorn.error"):
        with TestClient(create_app(Settings(API_KEYS=KEYS))):
            pass
    text = " ".join(r.getMessage() for r in caplog.records)
    assert "planning-desk" in text and "night-shift" in text
    assert not any(key in text for key in KEYS.values())


def test_cors_allows_the_configured_origin_only(keyed):
    pre = keyed.options("/v1/budgets", headers={
        "Origin": ORIGIN, "Access-Control-Request-Method": "POST",
        "Access-Control-Request-Headers": "content-type,x-api-key"})
    assert pre.status_code == 200  # a preflight carries no key and needs none
    assert pre.headers["access-control-allow-origin"] == ORIGIN
    other = keyed.options("/v1/budgets", headers={
        "Origin": "https://elsewhere.example.net", "Access-Control-Request-Method": "POST"})
    assert "access-control-allow-origin" not in other.headers
    got = keyed.get("/v1/reference", headers={"Origin": ORIGIN, "X-API-Key": KEYS["night-shift"]})
    assert got.headers["access-control-allow-origin"] == ORIGIN
