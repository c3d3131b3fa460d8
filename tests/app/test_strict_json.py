"""JSON bodies mean what they say: numbers are numbers, booleans are booleans (no coercion);
the CSV/query route and multipart form fields still convert their text, with a 422 naming
the parameter for text that is not a number. And a batch's orbit file in ``defaults`` is
parsed once for all items, off the event loop."""

from __future__ import annotations

import copy

import pytest
from support.big_oem import circular_oem
from taubudget.app.api import budgets as budget_routes
from taubudget.app.schemas import EXAMPLE_REQUEST

COERCED = [  # the reproducers: each gave 200
    (("orbit", "semi_major_axis_km"), "26561.4"),
    (("orbit", "eccentricity"), False),
    (("orbit", "inclination_deg"), True),
    (("gravity", "sun"), "yes"),
    (("gravity", "earth_zonal_degree"), "2"),
    (("gravity", "earth_zonal_degree"), 2.5),  # not an integer
    (("gravity", "earth_zonal_degree"), True),
]


@pytest.mark.parametrize("path, value", COERCED)
def test_json_bodies_are_not_coerced(client, problem_of, path, value):
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body[path[0]][path[1]] = value
    problem = problem_of(client.post("/v1/budgets", json=body), 422)
    assert f"/{path[0]}/{path[1]}" in [e["pointer"] for e in problem["errors"]]


def test_batch_items_are_strict_too(client):
    item = {"id": "text-number", **copy.deepcopy(EXAMPLE_REQUEST)}
    item["orbit"]["semi_major_axis_km"] = "26561.4"
    out = client.post("/v1/budgets/batch", json={"items": [item]}).json()
    assert out["items"][0]["status"] == 422
    assert out["items"][0]["problem"]["errors"][0]["pointer"] == "/items/0/orbit/semi_major_axis_km"


def test_times_are_still_iso_text_and_numbers_may_be_integers(client):
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body["orbit"]["semi_major_axis_km"] = 26561  # a JSON integer is a number
    assert client.post("/v1/budgets", json=body).status_code == 200


def test_an_integer_field_takes_a_number_with_no_fraction(client):
    """JSON has one number type, and JSON Schema's "integer" (the served document's type for these
    fields) admits 2.0: a script that computes a degree or a count as a float writes 4.0. The
    valid-body fuzz of the studies routes found a sweep "count": 2.0 refused while the document
    admitted it."""
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body["gravity"]["earth_zonal_degree"] = 2.0
    out = client.post("/v1/budgets", json=body)
    assert out.status_code == 200, out.text
    assert out.json()["rate_terms_fractional"]["earth_zonal"] != 0.0  # degree 2: J2 is in the rate


def test_the_query_route_converts_text_and_names_bad_text(client, problem_of):
    q = {"semi_major_axis_km": "26561.4", "eccentricity": "0", "inclination_deg": "55", "sun": "false",
         "start": "2027-03-01T00:00:00Z", "duration_days": "1", "field": "mean_rate_us_per_day"}
    assert client.get("/v1/budgets.csv", params=q).status_code == 200
    problem = problem_of(client.get("/v1/budgets.csv", params={**q, "semi_major_axis_km": "abc"}), 422)
    assert problem["errors"][0]["parameter"] == "semi_major_axis_km"


def test_a_batch_parses_the_defaults_orbit_file_once(client, monkeypatch):
    calls = []
    real = budget_routes.orbit_source
    monkeypatch.setattr(budget_routes, "orbit_source", lambda *a, **k: calls.append(1) or real(*a, **k))
    oem = circular_oem(2000)  # 33 hours of 60 s states
    items = [{"id": f"hour-{k}", "start": f"2027-03-01T{k:02d}:00:00Z"} for k in range(12)]
    body = {"defaults": {"orbit": {"type": "oem", "text": oem}, "duration_days": 1 / 24,
                         "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}},
            "items": items}
    out = client.post("/v1/budgets/batch", json=body).json()
    assert out["succeeded"] == 12, out["items"][0]["problem"]
    assert len(calls) == 1
    # An equatorial circle at 26,561.4 km, point-mass Earth: Kouba (2004) 38.575008 us/day.
    assert out["items"][5]["budget"]["mean_rate_us_per_day"] == pytest.approx(38.575008, abs=1e-3)
