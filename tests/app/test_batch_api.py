"""POST /v1/budgets/batch: defaults merging, per-item problems, multipart upload, limits."""

from __future__ import annotations

import copy
import json
import math

import pytest
from taubudget.app.schemas import EXAMPLE_BATCH_REQUEST
from taubudget.physics.budget import CAUTION, PANELS_PER_PERIOD
from taubudget.physics.quadrature import NODES_PER_PANEL

# Kouba (2004), GPS Solutions 8(3):170-180: circular a = 26,561.4 km, point-mass Earth, vs TT.
KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_RATE_ROUNDING_US_PER_DAY = 1e-6  # published to 1 ps/day


def _orbit(a_km=26561.4, e=0.0):
    return {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": a_km,
            "eccentricity": e, "inclination_deg": 55.0}


def _batch(*items, **defaults):
    base = {"reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
            "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}}
    base.update(defaults)
    return {"defaults": base, "items": list(items)}


def test_one_bad_item_does_not_fail_the_others(client, pointers_of):
    body = _batch({"id": "good-a", "orbit": _orbit()},
                  {"id": "sunk", "orbit": _orbit(a_km=6000.0)},
                  {"id": "good-b", "orbit": _orbit(e=0.01), "reference": "GPS"})
    resp = client.post("/v1/budgets/batch", json=body)
    assert resp.status_code == 200
    out = resp.json()
    assert [r["id"] for r in out["items"]] == ["good-a", "sunk", "good-b"]
    assert [r["status"] for r in out["items"]] == [200, 422, 200]
    assert (out["succeeded"], out["failed"]) == (2, 1)
    good = out["items"][0]["budget"]
    assert good["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                         abs=PUBLISHED_RATE_ROUNDING_US_PER_DAY)
    assert good["caution"] == CAUTION and out["caution"] == CAUTION
    bad = out["items"][1]
    assert bad["budget"] is None
    assert pointers_of(bad["problem"]) == ["/items/1/orbit/semi_major_axis_km"]
    assert out["items"][2]["budget"]["reference"] == "GPS"  # item key over the default


def test_batch_item_equals_single_request(client):
    """An item merged over defaults gives the same budget as the merged single request."""
    body = _batch({"id": 7, "orbit": _orbit(e=0.003), "end": "2027-03-01T12:00:00Z"})
    item = client.post("/v1/budgets/batch", json=body).json()["items"][0]
    single = copy.deepcopy(body["defaults"])
    single.pop("duration_days")  # the item's own end replaces the default duration
    single.update(orbit=_orbit(e=0.003), end="2027-03-01T12:00:00Z")
    assert item["id"] == 7
    assert item["budget"] == client.post("/v1/budgets", json=single).json()


def test_item_errors_point_into_defaults_or_item(client, pointers_of):
    body = _batch({"id": "a", "orbit": _orbit(), "colour": "red"},
                  {"orbit": _orbit()},
                  {"id": "a", "orbit": _orbit()},
                  "not an object",
                  {"id": "c", "orbit": _orbit()},
                  reference="UTC")
    out = client.post("/v1/budgets/batch", json=body).json()
    ptrs = [pointers_of(r["problem"]) for r in out["items"]]
    assert sorted(ptrs[0]) == ["/defaults/reference", "/items/0/colour"]
    assert ptrs[1] == ["/items/1/id"]
    assert ptrs[2] == ["/items/2/id"] and "earlier item" in out["items"][2]["problem"]["detail"]
    assert ptrs[3] == ["/items/3"]
    assert ptrs[4] == ["/defaults/reference"]
    assert out["succeeded"] == 0


def test_tle_failing_mid_span_is_an_item_problem(client, tle_lines, pointers_of):
    # Invented decaying low orbit: a huge drag term drives SGP4's mean eccentricity out of range.
    line1, line2 = tle_lines(16.4, 51.6, 0.0005, " 50000-0")
    body = _batch({"id": "decaying", "orbit": {"type": "tle", "line1": line1, "line2": line2}},
                  {"id": "fine", "orbit": _orbit()}, duration_days=2.0)
    out = client.post("/v1/budgets/batch", json=body).json()
    assert [r["status"] for r in out["items"]] == [422, 200]
    p = out["items"][0]["problem"]
    assert pointers_of(p) == ["/items/0/orbit"]
    assert "SGP4" in p["detail"]


def test_multipart_upload_of_the_same_json(client):
    data = json.dumps(EXAMPLE_BATCH_REQUEST).encode()
    up = client.post("/v1/budgets/batch", files={"file": ("constellation.json", data, "application/json")})
    direct = client.post("/v1/budgets/batch", content=data)
    assert up.status_code == direct.status_code == 200
    assert up.json() == direct.json()
    assert [r["id"] for r in up.json()["items"]] == ["kestrel-01", "kestrel-02"]


def test_multipart_without_file(client, problem_of):
    p = problem_of(client.post("/v1/budgets/batch", data={"note": "no file"},
                               files={"other": ("x.txt", b"", "text/plain")}), 400)
    assert p["title"] == "Empty body"  # the one file part there is, is empty
    problem_of(client.post("/v1/budgets/batch", data={"note": "x"},
                               headers={"content-type": "multipart/form-data; boundary=zz"}), 400)


def test_too_many_items_is_413(small_client, problem_of):
    body = _batch(*({"id": i, "orbit": _orbit()} for i in range(4)))  # limit 3
    p = problem_of(small_client.post("/v1/budgets/batch", json=body), 413)
    assert p["limit_name"] == "MAX_BATCH_ITEMS" and p["limit"] == 3
    assert "TAUBUDGET_MAX_BATCH_ITEMS" in p["detail"]


def test_node_estimate_over_limit_is_413_before_any_work(small_client, problem_of):
    # A 550 km orbit: T = 2 pi sqrt(a^3 / GM) (Kepler's third law, GM = 3.986004418e14, TN36).
    a_m = (6378.137 + 550.0) * 1e3
    period_s = 2 * math.pi * math.sqrt(a_m**3 / 3.986004418e14)  # ~5739 s
    span_s = 2.9 * 86400.0  # below small_client's 3-day span limit
    # 3 items x NODES_PER_PANEL nodes per first panel of 1/PANELS_PER_PERIOD orbit.
    expected = 3 * NODES_PER_PANEL * math.ceil(span_s / (period_s / PANELS_PER_PERIOD))
    assert expected > 2000  # small_client's MAX_BATCH_NODES
    low = _orbit(a_km=a_m / 1e3)
    body = _batch({"id": "low-1", "orbit": low}, {"id": "low-2", "orbit": low},
                  {"id": "low-3", "orbit": low}, duration_days=2.9)
    p = problem_of(small_client.post("/v1/budgets/batch", json=body), 413)
    assert p["limit_name"] == "MAX_BATCH_NODES" and p["limit"] == 2000
    assert p["estimated_nodes"] == expected
    assert "TAUBUDGET_MAX_BATCH_NODES" in p["detail"]


def test_node_estimate_reported(client):
    body = _batch({"id": "one", "orbit": _orbit()})
    out = client.post("/v1/budgets/batch", json=body).json()
    # One day over first panels of one 43,081 s period (physics.budget.PANELS_PER_PERIOD = 1):
    # ceil(86400 / 43081.2) = 3 panels of NODES_PER_PANEL nodes.
    expected = NODES_PER_PANEL * math.ceil(86400.0 / (43081.2 / PANELS_PER_PERIOD))
    assert out["estimated_nodes"] == expected
    assert out["items"][0]["budget"]["nodes_used"] >= expected


def test_envelope_errors(client, problem_of, pointers_of):
    p = problem_of(client.post("/v1/budgets/batch", json={"items": [], "extra": 1}), 422)
    assert sorted(pointers_of(p)) == ["/extra", "/items"]
    problem_of(client.post("/v1/budgets/batch", content=b"[not json"), 400)
