"""A real `taubudget serve` process on a free port, driven over HTTP with httpx."""

from __future__ import annotations

import csv
import io
import json
import threading
import time

import httpx
import pytest
from taubudget.app.schemas import EXAMPLE_BATCH_REQUEST, EXAMPLE_REQUEST
from taubudget.physics.budget import CAUTION

# Kouba (2004), GPS Solutions 8(3):170-180: circular a = 26,561.4 km, point-mass Earth, vs TT.
KOUBA_RATE_US_PER_DAY = 38.575008
PUBLISHED_RATE_ROUNDING_US_PER_DAY = 1e-6  # published to 1 ps/day
PROBE_LATENCY_LIMIT_S = 1.0  # well inside the 3 s probe timeout of deploy/k8s/deployment.yaml


def test_budget_batch_csv_and_field_over_http(server):
    with httpx.Client(base_url=server, timeout=30.0) as c:
        # Sent as a script would: no content type.
        b = c.post("/v1/budgets", content=json.dumps(EXAMPLE_REQUEST).encode()).json()
        assert b["mean_rate_us_per_day"] == pytest.approx(KOUBA_RATE_US_PER_DAY,
                                                          abs=PUBLISHED_RATE_ROUNDING_US_PER_DAY)
        batch = c.post("/v1/budgets/batch", json=EXAMPLE_BATCH_REQUEST).json()
        assert [r["status"] for r in batch["items"]] == [200, 200]
        params = {"semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
                  "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
                  "earth_zonal_degree": 0, "sun": "false", "moon": "false"}
        text = c.get("/v1/budgets.csv", params=params).text
        rows = list(csv.reader(io.StringIO(text)))
        summary = {r[0]: r[1] for r in rows if r}
        assert summary["caution"] == CAUTION
        assert float(summary["mean_rate_us_per_day"]) == b["mean_rate_us_per_day"]
        one = c.get("/v1/budgets.csv", params={**params, "field": "mean_rate_us_per_day"})
        assert one.headers["content-type"].startswith("text/plain")
        assert float(one.text) == b["mean_rate_us_per_day"]


def test_probes_answer_while_a_long_budget_computes(server):
    # A batch of twelve 400-day budgets of a 550 km orbit with tides: ~2e5 nodes each, several
    # seconds of CPU in the worker's thread pool however fast one budget gets.
    one = {"orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                     "semi_major_axis_km": 6928.137, "eccentricity": 0.001, "inclination_deg": 53.0},
           "start": "2027-03-01T00:00:00Z", "duration_days": 400.0}
    long_request = {"items": [{**one, "id": k} for k in range(12)]}
    done = {}

    def run():
        with httpx.Client(base_url=server, timeout=300.0) as c:
            done["status"] = c.post("/v1/budgets/batch", json=long_request).status_code
        done["at"] = time.monotonic()

    worker = threading.Thread(target=run)
    worker.start()
    time.sleep(0.3)  # let the batch start computing
    with httpx.Client(base_url=server, timeout=30.0) as c:
        t0 = time.monotonic()
        assert c.get("/healthz").status_code == 200
        health_at = time.monotonic()
    worker.join(timeout=300)
    assert done["status"] == 200
    assert health_at < done["at"], "the probe waited for the budget"
    assert health_at - t0 < PROBE_LATENCY_LIMIT_S
