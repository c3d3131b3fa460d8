"""Work is bounded before it starts and stopped when its deadline passes (issue: reliability).

Reproducers: a state vector whose epoch lies a year after a one-day span took ~5 minutes and
~575 MB (the propagation from the epoch to the span was not in the estimate); a computation
ran on for minutes with no deadline. Each is refused up front, or stopped, with a problem
naming the limit and the estimate.
"""

from __future__ import annotations

import asyncio
import time

import pytest
from fastapi.testclient import TestClient
from taubudget.app.compute import Compute
from taubudget.app.main import create_app
from taubudget.app.problems import ProblemError
from taubudget.app.settings import Settings
from taubudget.physics.cancel import CancelToken, checkpoint

# A bound on any refused request: an estimate refuses in milliseconds, while the reproducer
# computed for ~294 s. Generous for a shared 2-core machine, tight against a regression.
REFUSAL_WALL_LIMIT_S = 5.0
# Circular LEO at 7000 km: v = sqrt(GM/r) (two-body closed form), period 5828 s.
LEO_STATE = {"position_gcrs_km": [7000.0, 0.0, 0.0], "velocity_gcrs_km_per_s": [0.0, 7.546049, 0.0]}


@pytest.fixture(scope="module")
def guarded_client():
    # The deadline keeps this module bounded even if the estimate regressed (504, not a hang).
    with TestClient(create_app(Settings(COMPUTE_DEADLINE_SECONDS=20.0))) as c:
        yield c


def _far_epoch_request():
    return {"orbit": {"type": "state_vector", "epoch": "2028-03-29T00:00:00Z", **LEO_STATE,
                      "force_model": {"earth_zonal_degree": 2, "sun": False, "moon": False}},
            "reference": "TT", "start": "2027-03-02T00:00:00Z", "duration_days": 1.0}


def test_propagation_from_a_distant_epoch_is_in_the_estimate(guarded_client, problem_of):
    t0 = time.monotonic()
    resp = guarded_client.post("/v1/budgets", json=_far_epoch_request())
    elapsed = time.monotonic() - t0
    body = problem_of(resp, 422)
    assert elapsed < REFUSAL_WALL_LIMIT_S
    err = body["errors"][0]
    assert err["pointer"] == "/orbit/epoch"
    assert "(orbit.epoch = '2028-03-29T00:00:00Z')" in body["detail"]  # the request's own text
    # 393 days from the span start to the epoch at 5828.5 s per orbit (2 pi sqrt(a^3/GM)):
    # 5826 revolutions, against the default limit of 250.
    assert "5826 revolutions" in err["detail"] and "limit of 250" in err["detail"]


def test_a_near_epoch_state_still_computes(guarded_client):
    req = _far_epoch_request()
    req["orbit"]["epoch"] = "2027-03-04T00:00:00Z"  # two days after the span start: ~45 orbits
    resp = guarded_client.post("/v1/budgets", json=req)
    assert resp.status_code == 200, resp.text


LEO_OPM = """CCSDS_OPM_VERS = 3.0
CREATION_DATE = 2028-03-28T00:00:00Z
ORIGINATOR = TAUBUDGET-TEST
OBJECT_NAME = WREN-LEO-1
OBJECT_ID = 2028-990A
CENTER_NAME = EARTH
REF_FRAME = GCRF
TIME_SYSTEM = UTC
EPOCH = 2028-03-29T00:00:00.000Z
X = 7000.0 [km]
Y = 0.0 [km]
Z = 0.0 [km]
X_DOT = 0.0 [km/s]
Y_DOT = 7.546049 [km/s]
Z_DOT = 0.0 [km/s]
"""
"""An invented low orbiter's OPM, epoch a year after the span asked for."""


def test_an_opm_upload_shares_the_estimate(guarded_client, problem_of):
    t0 = time.monotonic()
    resp = guarded_client.post("/v1/budgets", files={"file": ("wren.opm", LEO_OPM.encode())},
                               data={"start": "2027-03-02T00:00:00Z", "duration_days": "1"})
    assert time.monotonic() - t0 < REFUSAL_WALL_LIMIT_S
    body = problem_of(resp, 422)
    err = body["errors"][0]
    # the epoch is in the uploaded file: the error points at its text (the multipart part "file")
    assert err["pointer"] == "/orbit/text" and err["part"] == "file"
    assert "revolutions" in err["detail"] and "limit of 250" in err["detail"]


def test_a_computation_past_its_deadline_is_stopped_and_named(problem_of):
    # Limits opened so the estimate lets a ~20 s propagation through; the deadline stops it.
    settings = Settings(COMPUTE_DEADLINE_SECONDS=1.0, MAX_NUMERICAL_REVOLUTIONS=100_000,
                        MAX_CONCURRENT_COMPUTATIONS=1, COMPUTE_QUEUE_WAIT_SECONDS=1.0)
    req = _far_epoch_request()
    req["orbit"]["epoch"] = "2027-04-15T00:00:00Z"  # ~650 orbits from the span: ~20 s of DOP853
    with TestClient(create_app(settings)) as c:
        t0 = time.monotonic()
        resp = c.post("/v1/budgets", json=req)
        elapsed = time.monotonic() - t0
        body = problem_of(resp, 504)
        assert body["limit_name"] == "COMPUTE_DEADLINE_SECONDS" and body["limit"] == 1.0
        assert "1 s" in body["detail"]
        assert elapsed < 1.0 + REFUSAL_WALL_LIMIT_S
        # The single slot is free again: a cheap request runs at once (no 503 after 1 s).
        ok = c.post("/v1/budgets", json={
            "orbit": {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0},
            "reference": "TT", "start": "2027-03-02T00:00:00Z", "duration_days": 1.0})
        assert ok.status_code == 200, ok.text


class _GoneAfter:
    """A request stand-in whose client disconnects after ``after_s`` seconds."""

    def __init__(self, settings: Settings, after_s: float):
        from types import SimpleNamespace

        self.app = SimpleNamespace(state=SimpleNamespace(settings=settings))
        self.t0 = time.monotonic()
        self.after_s = after_s

    async def is_disconnected(self) -> bool:
        return time.monotonic() - self.t0 > self.after_s


def _spin_until_cancelled(limit_s: float) -> str:
    t0 = time.monotonic()
    while time.monotonic() - t0 < limit_s:
        checkpoint()
        time.sleep(0.005)
    return "ran to the end"


def test_a_disconnected_client_frees_its_slot():
    settings = Settings(COMPUTE_DEADLINE_SECONDS=60.0, MAX_CONCURRENT_COMPUTATIONS=1)
    request = _GoneAfter(settings, after_s=0.3)

    async def scenario():
        t0 = time.monotonic()
        with pytest.raises(ProblemError) as info:
            await Compute(request)(_spin_until_cancelled, 30.0)
        return info.value, time.monotonic() - t0, request.app.state.compute_slots.locked()

    err, elapsed, still_held = asyncio.run(scenario())
    assert err.status == 503 and "disconnected" in err.detail
    assert elapsed < 2.0 and not still_held


def test_a_token_without_deadline_never_stops_the_work():
    token = CancelToken(None)
    assert not token.is_cancelled()
    token.cancel("asked")
    assert token.is_cancelled() and token.reason == "asked"
