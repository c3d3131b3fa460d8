"""A real `taubudget serve` killed with SIGKILL mid-study, restarted on the same data directory:
the study completes and every item's result is stored exactly once; the `taubudget study` verbs
then watch, fetch and submit against the restarted server.

Outside truth: each item is a circular point-mass orbit whose mean rate has a closed form
(DESIGN.md; TN36 eq. 10.6 with v^2 = GM/a).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

import httpx
import pytest
from support.studies import (
    POINT_MASS_BASE,
    altitude_sweep,
    closed_form_rate,
    csv_rows,
    free_port,
    json_lines,
    kill_group,
    wait_finished,
)
from taubudget.app.studies.store import Store

REPO = Path(__file__).resolve().parents[3]
STARTUP_TIMEOUT_S = 120.0  # imports plus DE421 on a busy shared 2-core machine
LEASE_S = 3.0  # how long a killed server's claim on its study outlives it
INTEGRATION_TARGET = 1e-17  # DESIGN.md: integration error below 1e-17 fractional
ITEMS = 24
API_KEY = "k3-invented-test-key-0123456789abcdef"


def _start(data_dir: Path, port: int, api_keys: dict | None = None) -> subprocess.Popen:
    env = {**os.environ, "PYTHONPATH": str(REPO), "TAUBUDGET_DATA_DIR": str(data_dir),
           "TAUBUDGET_API_KEYS": json.dumps(api_keys or {}),
           "TAUBUDGET_DASK_WORKERS": "1", "TAUBUDGET_STUDY_LEASE_SECONDS": str(LEASE_S),
           "TAUBUDGET_DATABASE_URL": ""}
    # A session of its own: SIGKILL to the group takes the server and its Dask worker processes at once.
    proc = subprocess.Popen([sys.executable, "-m", "taubudget.app.cli", "serve", "--host", "127.0.0.1",
                             "--port", str(port), "--log-level", "warning"],
                            cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                            start_new_session=True)
    deadline = time.monotonic() + STARTUP_TIMEOUT_S
    while True:
        if proc.poll() is not None:
            pytest.fail(f"server exited with {proc.returncode}")
        try:
            if httpx.get(f"http://127.0.0.1:{port}/readyz", timeout=5).status_code == 200:
                return proc
        except httpx.TransportError:
            pass
        if time.monotonic() > deadline:
            kill_group(proc)
            pytest.fail("server did not become ready")
        time.sleep(0.2)


def test_a_killed_server_resumes_its_study_and_stores_each_item_once(tmp_path):
    sizes = [7000.0 + 1500.0 * k for k in range(ITEMS)]
    body = {"defaults": {**POINT_MASS_BASE, "duration_days": 3.0},
            "sweep": {"parameters": [{"field": "orbit.semi_major_axis_km", "values": sizes}]}}
    port = free_port()
    proc = _start(tmp_path, port)
    try:
        with httpx.Client(base_url=f"http://127.0.0.1:{port}", timeout=30) as c:
            resp = c.post("/v1/studies", json=body)
            assert resp.status_code == 202, resp.text
            study_id = resp.json()["id"]
            deadline = time.monotonic() + 300
            while c.get(f"/v1/studies/{study_id}").json()["done"] < 2:
                assert time.monotonic() < deadline, "no item finished"
                time.sleep(0.05)
    finally:
        kill_group(proc)  # mid-study: SIGKILL, no shutdown of any kind
    store = Store(f"sqlite:///{tmp_path / 'studies.sqlite3'}")
    before = len(store.result_counts(study_id))
    assert 2 <= before < ITEMS, "the kill did not land mid-study"
    assert store.get(study_id).state == "running"

    # The restarted server requires an API key (access control from settings): the CLI sends it.
    proc = _start(tmp_path, port, api_keys={"planning-desk": API_KEY})
    try:
        with httpx.Client(base_url=f"http://127.0.0.1:{port}", timeout=30,
                          headers={"X-API-Key": API_KEY}) as c:
            status = wait_finished(c.get, study_id, timeout_s=400)
            lines = json_lines(c.get(f"/v1/studies/{study_id}/results").text)
        _check_the_cli_against(f"http://127.0.0.1:{port}", study_id, tmp_path)
    finally:
        kill_group(proc)
    assert (status["state"], status["done"], status["failed"]) == ("done", ITEMS, 0)
    assert store.result_counts(study_id) == dict.fromkeys(range(ITEMS), 1)
    assert [r["index"] for r in lines] == list(range(ITEMS))
    for r in lines:
        a_km = r["parameters"]["orbit.semi_major_axis_km"]
        assert abs(r["budget"]["mean_fractional_rate"] - closed_form_rate(a_km)) < INTEGRATION_TARGET
    store.close()


def _cli(*args: str, key: str | None = API_KEY) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    env.pop("TAUBUDGET_API_KEY", None)
    if key is not None:
        env["TAUBUDGET_API_KEY"] = key
    return subprocess.run([sys.executable, "-m", "taubudget.app.cli", *args], cwd=REPO, capture_output=True,
                          text=True, timeout=300, env=env)


def _check_the_cli_against(server: str, study_id: str, tmp_path: Path) -> None:
    """`taubudget study watch|results|submit` against the restarted server."""
    watched = _cli("study", "watch", study_id, "--server", server)
    assert watched.returncode == 0, watched.stderr
    assert f"{ITEMS}/{ITEMS} finished, 0 failed" in watched.stderr and "(done)" in watched.stderr
    table = _cli("study", "results", study_id, "--csv", "--server", server)
    assert table.returncode == 0, table.stderr
    rows = csv_rows(table.stdout)
    assert [int(r["id"]) for r in rows] == list(range(ITEMS))
    for r in rows:
        rate = closed_form_rate(float(r["orbit.semi_major_axis_km"]))
        assert abs(float(r["mean_fractional_rate"]) - rate) < INTEGRATION_TARGET
    spec = tmp_path / "small.json"
    spec.write_text(json.dumps(altitude_sweep([8000.0, 9000.0])))
    submitted = _cli("study", "submit", str(spec), "--server", server, "--watch", "--interval-s", "0.2")
    assert submitted.returncode == 0, submitted.stderr
    assert "2 items" in submitted.stdout and "2/2 finished, 0 failed" in submitted.stderr
    refused = _cli("study", "watch", study_id, "--server", server, key=None)
    assert refused.returncode == 2 and "HTTP 401" in refused.stderr
    missing = _cli("study", "watch", "0" * 32, "--server", server)
    assert missing.returncode == 2 and "HTTP 404" in missing.stderr
