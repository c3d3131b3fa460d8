"""Format orbits through POST /v1/budgets: a 200 for a sample file, a 422 naming line and keyword."""

import copy
from pathlib import Path

from taubudget.app.schemas import EXAMPLE_REQUEST

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"


def _body(orbit, **kw):
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body.update({"orbit": orbit, "start": "2027-03-01T01:00:00Z", "end": "2027-03-01T07:00:00Z"}, **kw)
    return body


def test_oem_sample_budget(client):
    text = (SAMPLES / "kestrel_nav3.oem").read_text()
    resp = client.post("/v1/budgets", json=_body({"type": "oem", "text": text}))
    assert resp.status_code == 200, resp.text
    b = resp.json()
    assert b["model"]["orbit"]["type"] == "ephemeris"
    # Same two-body orbit as the OPM sample; GPS-like a: about +38.6 us/day against TT (Kouba 2004).
    assert 38.0 < b["mean_rate_us_per_day"] < 39.2


def test_state_vector_budget(client):
    orbit = {"type": "state_vector", "epoch": "2027-03-01T00:00:00Z",
             "position_gcrs_km": [-12000.0, 21000.0, 8000.0], "velocity_gcrs_km_per_s": [-2.5, -1.25, 2.75],
             "force_model": {"earth_zonal_degree": 2, "sun": True, "moon": True}}
    resp = client.post("/v1/budgets", json=_body(orbit))
    assert resp.status_code == 200, resp.text
    assert "DOP853" in resp.json()["model"]["orbit"]["propagation"]


def test_bad_frame_is_a_422_naming_line_and_keyword(client, problem_of, pointers_of):
    text = (SAMPLES / "kestrel_nav3.opm").read_text().replace("GCRF", "TOD")
    resp = client.post("/v1/budgets", json=_body({"type": "opm", "text": text}))
    body = problem_of(resp, 422)
    assert pointers_of(body) == ["/orbit/text"]
    assert "REF_FRAME" in body["errors"][0]["detail"] and "line " in body["errors"][0]["detail"]
