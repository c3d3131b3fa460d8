"""GET /v1/reference, /healthz and /readyz."""

from __future__ import annotations

import taubudget.physics.constants as constants
from fastapi.testclient import TestClient
from taubudget.app.main import create_app
from taubudget.physics.budget import CAUTION
from taubudget.physics.ephemeris import versions


def test_reference_lists_every_constant_with_its_source(client):
    body = client.get("/v1/reference").json()
    by_name = {c["name"]: c for c in body["constants"]}
    public = {n for n in vars(constants) if n.isupper() and not n.startswith("_")}
    assert set(by_name) == public
    # TN36 Table 1.1 defining values, carried with their docstrings
    assert by_name["L_G"]["value"] == 6.969290134e-10 and "TN36" in by_name["L_G"]["doc"]
    assert by_name["GM_EARTH_TCG_M3_PER_S2"]["value"] == 3.986004418e14
    assert all(c["doc"] for c in body["constants"]), [c["name"] for c in body["constants"] if not c["doc"]]
    assert {"TN36", "DE421", "EGM2008", "IS-GPS-200"} <= set(body["sources"])
    assert body["versions"]["skyfield"] == versions()["skyfield"]
    assert "DE421" in body["versions"]["ephemeris"]
    assert body["limits"]["MAX_SPAN_DAYS"] > 0 and body["caution"] == CAUTION


def test_healthz(client):
    assert client.get("/healthz").json() == {"status": "ok"}


def test_readyz_turns_ready_after_startup(problem_of):
    app = create_app()
    bare = TestClient(app)  # no lifespan: nothing loaded yet
    p = problem_of(bare.get("/readyz"), 503)
    assert "timescale" in p["detail"] and "ephemeris" in p["detail"]
    assert bare.get("/healthz").status_code == 200  # alive while not ready
    with TestClient(app) as started:
        assert started.get("/readyz").json() == {"status": "ready", "timescale": True, "ephemeris": True}
