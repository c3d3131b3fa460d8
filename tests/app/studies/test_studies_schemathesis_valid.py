"""Schemathesis reaches every /v1/studies operation with valid requests: 2xx per operation, no 5xx.

The studies routes are stateful: a study's id comes from a submission. Each operation's path
parameter is therefore narrowed to ids this test submitted first (through the API), and the
submission body to a *valid profile* of the served ``StudyRequest`` (small sweeps and batches of
physically usable budgets), each generated body checked against the served document's own
schema. The requests go to one app with its lifespan running: a throw-away SQLite store and a
real embedded Dask cluster (one worker process), so every accepted study really runs.
"""

from __future__ import annotations

import copy
import time
from collections import Counter

import jsonschema_rs
import pytest
import schemathesis
from fastapi.testclient import TestClient
from hypothesis import HealthCheck, Phase, given, settings
from schemathesis import GenerationMode
from taubudget.app.main import create_app
from taubudget.app.settings import Settings

EXAMPLES_PER_OPERATION = 8
TWO_XX_FLOOR = 4
STARTS = ["2027-03-01T00:00:00Z", "2031-07-15T12:00:00Z"]  # inside DE421 (1899-2053)


def _number(lo: float, hi: float) -> dict:
    return {"type": "number", "minimum": lo, "maximum": hi}


def _budget(start: str, days: float) -> dict:
    """An invented circular MEO navigation clock (point-mass Earth), a valid budget request."""
    return {"orbit": {"type": "keplerian", "epoch": start, "semi_major_axis_km": 26560.0,
                      "eccentricity": 0.0, "inclination_deg": 55.0},
            "start": start, "duration_days": days, "reference": "TT",
            "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}}


DEFAULTS = [_budget(s, 0.5) for s in STARTS]
SWEPT = {"orbit.semi_major_axis_km": (7000.0, 45000.0), "orbit.eccentricity": (0.0, 0.05),
         "orbit.inclination_deg": (0.0, 180.0), "duration_days": (0.1, 1.0)}
SWEEP_PARAMETER = {"oneOf": [
    {"type": "object", "additionalProperties": False, "required": ["field", "start", "stop", "count"],
     "properties": {"field": {"enum": [f]}, "start": _number(*r), "stop": _number(*r),
                    "count": {"type": "integer", "minimum": 1, "maximum": 3}}}
    for f, r in SWEPT.items()]}
ITEM = {"type": "object", "additionalProperties": False, "required": ["id"],
        "properties": {"id": {"type": "string", "pattern": "^[a-z]{1,8}$"},
                       "orbit": {"type": "object", "additionalProperties": False,
                                 "required": ["type", "epoch", "semi_major_axis_km", "eccentricity",
                                              "inclination_deg"],
                                 "properties": {"type": {"enum": ["keplerian"]}, "epoch": {"enum": STARTS},
                                                "semi_major_axis_km": _number(7000.0, 45000.0),
                                                "eccentricity": _number(0.0, 0.05),
                                                "inclination_deg": _number(0.0, 180.0)}},
                       "reference": {"enum": ["TT", "TAI", "GPS", "TCG"]}}}
STUDY = {"oneOf": [
    {"type": "object", "additionalProperties": False, "required": ["kind", "defaults", "sweep"],
     "properties": {"kind": {"enum": ["budget"]}, "name": {"type": "string", "maxLength": 40},
                    "defaults": {"enum": DEFAULTS},
                    "sweep": {"type": "object", "additionalProperties": False, "required": ["parameters"],
                              "properties": {"mode": {"enum": ["grid"]},
                                             "parameters": {"type": "array", "minItems": 1, "maxItems": 1,
                                                            "items": SWEEP_PARAMETER}}}}},
    {"type": "object", "additionalProperties": False, "required": ["kind", "defaults", "items"],
     "properties": {"kind": {"enum": ["budget"]}, "name": {"type": "string", "maxLength": 40},
                    "defaults": {"enum": DEFAULTS},
                    "items": {"type": "array", "minItems": 1, "maxItems": 3, "items": ITEM}}},
]}
SERVED = create_app(Settings()).openapi()


def _profiled(ids: list[str]) -> dict:
    """The served document with the studies' request bodies, ids and list bounds narrowed."""
    out = copy.deepcopy(SERVED)
    out["paths"] = {p: v for p, v in out["paths"].items() if p.startswith("/v1/studies")}
    out["paths"]["/v1/studies"]["post"]["requestBody"]["content"] = {"application/json": {"schema": STUDY}}
    for p in out["paths"]["/v1/studies"]["get"]["parameters"]:
        p["schema"] = {"type": "integer", "minimum": 1, "maximum": 20} if p["name"] == "limit" else {
            "type": "integer", "minimum": 0, "maximum": 3}
    for ops in out["paths"].values():
        for op in ops.values():
            for p in op.get("parameters", []):
                if p["name"] == "study_id":
                    p["schema"] = {"enum": ids}
    return out


OPERATIONS = [(p, m) for p, v in SERVED["paths"].items() if p.startswith("/v1/studies") for m in v]


@pytest.fixture(scope="module")
def live(tmp_path_factory):
    settings = Settings(DATA_DIR=str(tmp_path_factory.mktemp("fuzz-studies")), DASK_WORKERS=1,
                        MAX_STUDY_ITEMS=20, MAX_QUEUED_STUDY_ITEMS=5_000, MAX_NODES=50_000)
    with TestClient(create_app(settings)) as client:
        yield client
        for s in client.get("/v1/studies", params={"limit": 500}).json()["studies"]:
            if s["state"] in ("queued", "running"):  # free the worker before the cluster stops
                client.delete(f"/v1/studies/{s['id']}")


def _submit(client, days: float, count: int) -> str:
    body = {"kind": "budget", "defaults": _budget(STARTS[0], days),
            "sweep": {"parameters": [{"field": "orbit.semi_major_axis_km", "start": 7000.0,
                                      "stop": 42000.0, "count": count}]}}
    resp = client.post("/v1/studies", json=body)
    assert resp.status_code == 202, resp.text
    return resp.json()["id"]


def _settle(client, ids: list[str], timeout_s: float = 120.0) -> None:
    """Wait until the studies have finished (the results routes then read every item)."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        states = {client.get(f"/v1/studies/{i}").json()["state"] for i in ids}
        if states <= {"done", "failed", "cancelled"}:
            return
        time.sleep(0.2)
    pytest.fail(f"studies {ids} did not finish in {timeout_s} s")


# Hypothesis warns when the global ``random`` state changes while a case is drawn; here the
# study dispatcher's and Dask's own threads (heartbeats with jitter) draw from it concurrently.
@pytest.mark.filterwarnings("ignore:Do not use the `random` module inside strategies")
@pytest.mark.parametrize("path,method", OPERATIONS, ids=[f"{m.upper()} {p}" for p, m in OPERATIONS])
def test_valid_requests_reach_every_studies_operation(live, path, method):
    if method == "delete":
        # Studies long enough to be still queued or running when they are cancelled; a second
        # cancel of the same study is a 409 by design.
        ids = [_submit(live, 30.0, 20) for _ in range(EXAMPLES_PER_OPERATION)]
    else:
        ids = [_submit(live, 0.5, 2) for _ in range(TWO_XX_FLOOR)]  # enough ids for the floor
        _settle(live, ids)
    schema = schemathesis.openapi.from_dict(_profiled(ids))
    operation = next(op for op in (r.ok() for r in schema.get_all_operations())
                     if op.path == path and op.method.lower() == method)
    validator = jsonschema_rs.Draft202012Validator({"$ref": "#/components/schemas/StudyRequest",
                                                    "components": SERVED["components"]})
    statuses: Counter = Counter()
    accepted: list[str] = []

    @given(case=operation.as_strategy(GenerationMode.POSITIVE))
    @settings(max_examples=EXAMPLES_PER_OPERATION, derandomize=True, phases=[Phase.generate],
              deadline=None, database=None, suppress_health_check=list(HealthCheck))
    def run(case):
        body = case.body if isinstance(case.body, dict) else None
        if body is not None:
            validator.validate(body)  # the profile stays inside the served document
        response = live.request(case.method, case.formatted_path, params=case.query or None, json=body)
        statuses[response.status_code] += 1
        assert response.status_code < 500, response.text[:500]
        if method == "delete":
            assert response.status_code in (200, 409), response.text[:500]
        if method == "post":  # every body of the profile is a usable study: accepted
            assert response.status_code == 202, (body, response.text[:500])
        if method == "post" and response.status_code == 202:
            accepted.append(response.json()["id"])

    run()
    two_xx = sum(n for status, n in statuses.items() if 200 <= status < 300)
    floor = 1 if method == "delete" else TWO_XX_FLOOR
    assert two_xx >= floor, dict(statuses)
    if accepted:  # the generated studies really ran on the workers: every item has a result
        _settle(live, accepted)
        for i in accepted:
            st = live.get(f"/v1/studies/{i}").json()
            assert st["state"] == "done" and st["done"] == st["total"], st
