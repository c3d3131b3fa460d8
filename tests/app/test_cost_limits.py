"""Work is bounded by its estimated cost (nodes, series points, response bytes), not by days.

Reproducers: a 2-year lunar clock against TDB, a Mars year and a 10-year navigation-satellite
life were refused by a fixed 400-day cap although their node counts are small; a series of
exactly the point limit passed the up-front check, was computed whole, then refused; a series
with a clock block reached ~40 MB against a stated ~20 MB.
"""

from __future__ import annotations

import copy

import pytest
from fastapi.testclient import TestClient
from taubudget.app.compute import estimate_cost
from taubudget.app.main import create_app
from taubudget.app.schemas import BudgetRequest
from taubudget.app.services.budget import _reference_source, build_span
from taubudget.app.services.orbits import build_source
from taubudget.app.settings import Settings
from taubudget.physics import budget as budget_mod

# Kouba (2004), GPS Solutions 8(3):170-180: circular a = 26,561.4 km, point-mass Earth, vs TT.
KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_ROUNDING_US_PER_DAY = 1e-6  # published to 1 ps/day

LONG_SPANS = {
    "lunar clock, 2 years, TDB": {
        "orbit": {"type": "surface", "center": "moon", "latitude_deg": -12.5, "longitude_deg": 23.4},
        "reference": "TDB", "start": "2028-01-01T00:00:00Z", "duration_days": 730.5},
    "Mars clock, one Mars year (686.98 d), TDB": {
        "orbit": {"type": "surface", "center": "mars", "latitude_deg": 18.4, "longitude_deg": 226.0},
        "reference": "TDB", "start": "2029-02-01T00:00:00Z", "duration_days": 686.98},
}
NAV_LIFE = {
    "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
              "eccentricity": 0.0, "inclination_deg": 55.0},
    "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 3652.5,
    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}}


@pytest.mark.parametrize("name", sorted(LONG_SPANS))
def test_long_spans_with_few_nodes_are_computed(client, name):
    resp = client.post("/v1/budgets", json=LONG_SPANS[name])
    assert resp.status_code == 200, resp.text
    # A surface clock: 12-hour panels of 20 nodes, ~40 nodes per day.
    assert resp.json()["nodes_used"] < 45 * LONG_SPANS[name]["duration_days"]


def test_a_ten_year_navigation_life_matches_the_closed_form(client):
    resp = client.post("/v1/budgets", json=NAV_LIFE)
    assert resp.status_code == 200, resp.text
    body = resp.json()
    assert abs(body["mean_rate_us_per_day"] - KOUBA_RATE_US_PER_DAY) <= PUBLISHED_ROUNDING_US_PER_DAY
    assert body["span_s"] == pytest.approx(3652.5 * 86400.0)


def test_over_the_node_limit_is_refused_up_front_naming_estimate_and_limit(problem_of, monkeypatch):
    monkeypatch.setattr(budget_mod, "compute_budget", _must_not_run)
    leo = {"orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 6878.0,
                     "eccentricity": 0.001, "inclination_deg": 97.5},
           "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 365.0,
           "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}}  # two-body period
    with TestClient(create_app(Settings(MAX_NODES=100_000))) as c:
        body = problem_of(c.post("/v1/budgets", json=leo), 422)
    err = body["errors"][0]
    assert err["pointer"] == "/duration_days"
    # 365 days / one 5676.8 s orbit per panel (2 pi sqrt(a^3/GM)) = 5556 panels x 20 nodes.
    assert "estimated 111120 quadrature nodes" in err["detail"] and "limit of 100000" in err["detail"]


def _must_not_run(*args, **kwargs):
    raise AssertionError("the budget was computed although its cost is over a limit")


def _series_request(step_s: float) -> dict:
    return {"orbit": {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0},
            "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "series_step_s": step_s}


def test_a_series_of_exactly_the_limit_is_computed(small_client):
    # small_client: MAX_SERIES_POINTS = 500. 86400 s / 173.16 s = 498.96 steps: 0 .. 498 steps
    # (499 times) plus the span end = 500 points.
    resp = small_client.post("/v1/budgets", json=_series_request(173.16))
    assert resp.status_code == 200, resp.text
    assert len(resp.json()["series"]["time_utc"]) == 500


def test_one_point_over_the_limit_is_refused_before_any_work(small_client, problem_of, monkeypatch):
    monkeypatch.setattr(budget_mod, "compute_budget", _must_not_run)
    # 86400 / 172.8 = 500 steps exactly: 501 points, the end included once.
    body = problem_of(small_client.post("/v1/budgets", json=_series_request(172.8)), 422)
    err = body["errors"][0]
    assert err["pointer"] == "/series_step_s"
    assert "501 points" in err["detail"] and "limit of 500" in err["detail"]


def test_the_response_size_is_bounded_before_work(client, problem_of, monkeypatch):
    """The reproducer: a series at the point limit with a clock block was a ~40 MB body."""
    monkeypatch.setattr(budget_mod, "compute_budget", _must_not_run)
    req = {**_series_request(0.5), "clock": {"preset": "space_rubidium"}}  # 172,801 points
    body = problem_of(client.post("/v1/budgets", json=req), 422)
    assert "MB" in body["detail"] and "TAUBUDGET_MAX_RESPONSE_BYTES" in body["detail"]


def test_the_response_estimate_bounds_the_real_size(client):
    """The byte estimate is an upper bound for the richest rows: BCRS, link station, clock."""
    req = {"orbit": {"type": "keplerian", "center": "sun", "reference_plane": "ecliptic_j2000",
                     "epoch": "2030-04-01T00:00:00Z", "semi_major_axis_km": 188000000.0, "eccentricity": 0.2,
                     "inclination_deg": 1.5, "mean_anomaly_deg": 10.0},
           "reference": "TDB", "start": "2030-04-01T00:00:00Z", "duration_days": 20.0, "series_step_s": 600,
           "link_station": {"type": "surface", "latitude_deg": -30.2, "longitude_deg": 149.1},
           "clock": {"preset": "space_rubidium"}}
    resp = client.post("/v1/budgets", json=copy.deepcopy(req))
    assert resp.status_code == 200, resp.text
    model = BudgetRequest.model_validate(req)
    settings = Settings()
    source = build_source(model.orbit)
    cost = estimate_cost(source, _reference_source(model), build_span(model, settings), model.series_step_s,
                         clock=True, link_station=True)
    assert cost.series_points == len(resp.json()["series"]["time_utc"]) == 2881
    assert len(resp.content) <= cost.response_bytes
