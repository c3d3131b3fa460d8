"""Studies on an external Dask cluster: a real `dask scheduler` and two `dask worker` processes on
loopback. The service's results equal the embedded cluster's item by item, and a study survives
the loss of one worker (SIGKILL mid-study).

Outside truth: circular point-mass orbits against the closed-form rate (DESIGN.md; TN36 eq. 10.6).
"""

from __future__ import annotations

import subprocess
import time

import pytest
from fastapi.testclient import TestClient
from support.studies import (
    POINT_MASS_BASE,
    altitude_sweep,
    closed_form_rate,
    dask_command,
    free_port,
    json_lines,
    kill_group,
    wait_finished,
)
from taubudget.app.main import create_app
from taubudget.app.settings import Settings

STARTUP_TIMEOUT_S = 180.0  # two worker processes importing the project on a busy 2-core machine
INTEGRATION_TARGET = 1e-17  # DESIGN.md: integration error below 1e-17 fractional


def _spawn(args: list[str]) -> subprocess.Popen:
    # Each process in a session of its own, so a worker (and its nanny's child) dies as one.
    return subprocess.Popen([dask_command(), *args], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True)


@pytest.fixture(scope="module")
def cluster():
    from distributed import Client

    port = free_port()
    address = f"tcp://127.0.0.1:{port}"
    scheduler = _spawn(["scheduler", "--host", "127.0.0.1", "--port", str(port), "--no-dashboard"])
    workers = [_spawn(["worker", address, "--nworkers", "1", "--nthreads", "1", "--no-dashboard",
                       "--name", f"w{k}"]) for k in range(2)]
    try:
        with Client(address, timeout="60s", set_as_default=False) as c:
            c.wait_for_workers(2, timeout=STARTUP_TIMEOUT_S)
        yield address, workers
    finally:
        for p in [*workers, scheduler]:
            kill_group(p)


@pytest.fixture(scope="module")
def external_client(cluster, tmp_path_factory):
    settings = Settings(DATA_DIR=str(tmp_path_factory.mktemp("external")), DASK_SCHEDULER_ADDRESS=cluster[0],
                        STUDY_LEASE_SECONDS=10)
    with TestClient(create_app(settings)) as c:
        yield c


def _run(client, body) -> tuple[dict, list[dict]]:
    resp = client.post("/v1/studies", json=body)
    assert resp.status_code == 202, resp.text
    status = wait_finished(client.get, resp.json()["id"], timeout_s=400)
    return status, json_lines(client.get(f"/v1/studies/{status['id']}/results").text)


def test_an_external_cluster_gives_the_embedded_results_item_by_item(external_client, study_client):
    body = altitude_sweep([7000.0, 9000.0, 20000.0, 42164.0], (0.0, 0.05))
    ext_status, ext = _run(external_client, body)
    emb_status, emb = _run(study_client, body)
    assert ext_status["done"] == emb_status["done"] == 8
    assert len(ext) == len(emb) == 8
    for a, b in zip(ext, emb, strict=True):
        assert a == b
        if a["parameters"]["orbit.eccentricity"] == 0.0:
            rate = closed_form_rate(a["parameters"]["orbit.semi_major_axis_km"])
            assert abs(a["budget"]["mean_fractional_rate"] - rate) < INTEGRATION_TARGET


def test_a_study_completes_when_a_worker_is_killed_mid_study(external_client, cluster):
    _, workers = cluster
    n = 24
    body = {"defaults": {**POINT_MASS_BASE, "duration_days": 3.0},
            "sweep": {"parameters": [{"field": "orbit.semi_major_axis_km",
                                      "values": [7000.0 + 1000.0 * k for k in range(n)]}]}}
    resp = external_client.post("/v1/studies", json=body)
    assert resp.status_code == 202, resp.text
    study_id = resp.json()["id"]
    deadline = time.monotonic() + 300
    while (done := external_client.get(f"/v1/studies/{study_id}").json()["done"]) < 2:
        assert time.monotonic() < deadline, "no item finished"
        time.sleep(0.05)
    assert done < n - 4, "the worker must die mid-study"
    kill_group(workers[0])  # SIGKILL: its in-flight items are lost and rerun on the other worker
    status = wait_finished(external_client.get, study_id, timeout_s=400)
    assert (status["state"], status["done"], status["failed"]) == ("done", n, 0)
    lines = json_lines(external_client.get(f"/v1/studies/{study_id}/results").text)
    assert [r["index"] for r in lines] == list(range(n))
    for r in lines:
        rate = closed_form_rate(r["parameters"]["orbit.semi_major_axis_km"])
        assert abs(r["budget"]["mean_fractional_rate"] - rate) < INTEGRATION_TARGET


def test_two_replicas_share_a_postgresql_store_and_store_each_item_once(cluster, postgres):
    """Two API apps (replicas) on one real PostgreSQL database and the external cluster: a study
    submitted to one is visible from the other, both dispatchers run, every item lands once."""
    from taubudget.app.studies.store import Store

    url = postgres.new_database()
    settings = Settings(DATABASE_URL=url, DASK_SCHEDULER_ADDRESS=cluster[0], STUDY_LEASE_SECONDS=10)
    sizes = [7000.0 + 2500.0 * k for k in range(12)]
    with TestClient(create_app(settings)) as a, TestClient(create_app(settings)) as b:
        first = a.post("/v1/studies", json=altitude_sweep(sizes))
        second = b.post("/v1/studies", json=altitude_sweep(sizes[:6]))
        assert first.status_code == second.status_code == 202
        for resp, n in ((first, 12), (second, 6)):
            status = wait_finished(a.get if resp is second else b.get, resp.json()["id"], timeout_s=400)
            assert (status["state"], status["done"]) == ("done", n)
        lines = json_lines(b.get(f"/v1/studies/{first.json()['id']}/results").text)
        listed = {s["id"] for s in a.get("/v1/studies").json()["studies"]}
    assert {first.json()["id"], second.json()["id"]} <= listed
    for r in lines:
        rate = closed_form_rate(r["parameters"]["orbit.semi_major_axis_km"])
        assert abs(r["budget"]["mean_fractional_rate"] - rate) < INTEGRATION_TARGET
    store = Store(url)
    try:
        assert store.result_counts(first.json()["id"]) == dict.fromkeys(range(12), 1)
        assert store.result_counts(second.json()["id"]) == dict.fromkeys(range(6), 1)
    finally:
        store.close()
