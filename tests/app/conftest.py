"""Fixtures for the HTTP tests: one app per module, with the lifespan (data loading) run."""

from __future__ import annotations

import copy

import pytest
from fastapi.testclient import TestClient
from support.server import ServerFailed, running_server
from taubudget.app.main import create_app
from taubudget.app.schemas import EXAMPLE_REQUEST
from taubudget.app.settings import Settings


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


@pytest.fixture(scope="module")
def server():
    """A real `taubudget serve` subprocess on a free loopback port: its base URL."""
    try:
        with running_server() as base:
            yield base
    except ServerFailed as exc:
        pytest.fail(str(exc))


@pytest.fixture(scope="module")
def small_client():
    """An app with tight limits, so limit paths are reached with cheap requests."""
    settings = Settings(MAX_SPAN_DAYS=3.0, MAX_BATCH_ITEMS=3, MAX_BATCH_NODES=2000,
                        MAX_BODY_BYTES=4000, MAX_NODES=20_000, MAX_SERIES_POINTS=500)
    with TestClient(create_app(settings)) as c:
        yield c


@pytest.fixture
def request_body():
    """A fresh copy of the circular-MEO example (point-mass Earth, one day, against TT)."""
    return copy.deepcopy(EXAMPLE_REQUEST)


PROBLEM_KEYS = {"type", "title", "status", "detail", "errors"}


@pytest.fixture
def problem_of():
    """Check a response is an RFC 9457 problem with the expected status; return its body."""

    def check(resp, status: int) -> dict:
        assert resp.status_code == status, resp.text
        assert resp.headers["content-type"].startswith("application/problem+json")
        body = resp.json()
        assert PROBLEM_KEYS <= body.keys()
        assert body["status"] == status
        assert body["detail"] and "Traceback" not in resp.text
        for err in body["errors"]:
            assert {"pointer", "detail"} <= err.keys()
        return body

    return check


def pointers(problem: dict) -> list[str]:
    return [e["pointer"] for e in problem["errors"]]


@pytest.fixture
def pointers_of():
    return pointers


def _with_checksum(body68: str) -> str:
    assert len(body68) == 68, len(body68)
    total = sum(int(ch) if ch.isdigit() else (1 if ch == "-" else 0) for ch in body68)
    return body68 + str(total % 10)


def make_tle(mean_motion_rev_per_day: float = 2.00561, inclination_deg: float = 55.0,
             eccentricity: float = 0.005, bstar: str = " 00000-0", epoch: str = "27060.00000000"):
    """An invented two-line element set (catalogue 99901, a made-up designator)."""
    line1 = f"1 99901U 27001A   {epoch}  .00000000  00000-0 {bstar} 0  999"
    line2 = (f"2 99901 {inclination_deg:8.4f} 100.0000 {round(eccentricity * 1e7):07d}  30.0000 "
             f"330.0000 {mean_motion_rev_per_day:11.8f}    1")
    return _with_checksum(line1), _with_checksum(line2)


@pytest.fixture
def tle_lines():
    return make_tle
