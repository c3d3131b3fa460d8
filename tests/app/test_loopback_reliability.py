"""A real `taubudget serve` on loopback under hostile load (bounded: a few requests, ~30 s).

- ``/healthz`` answers within 100 ms while a worst-case batch (50 items sharing a 40,000-line
  OEM in ``defaults``) and a deadline-exceeding request run; before, the batch parsed the OEM on
  the event loop once per item and the probe stalled 37.7 s;
- a computation past its deadline is stopped (504 naming the deadline);
- clients that disconnect free their slots at once, not at the deadline;
- a connection that sends half its headers is closed after the header timeout.
"""

from __future__ import annotations

import contextlib
import json
import os
import socket
import threading
import time

import httpx
import pytest
from support.big_oem import circular_oem
from support.server import ServerFailed, running_server

SERVER_NICENESS = -10
PROBE_LIMIT_S = 0.100  # the liveness bound, for 95 % of the probes
PROBE_WORST_S = 1.0  # every probe: well inside the 3 s probe timeout of deploy/k8s
# Why 95 % and not every probe under 100 ms: on a shared 2-core machine the scheduler alone can
# delay a process by a few hundred ms. Measured with budgets and batches rendered off the loop:
# worst probe 28-47 ms, median 6-10 ms (load average 3-4); before the fix it stalled for 37.7 s.
DEADLINE_S = 6.0
HEADER_TIMEOUT_S = 1.0
QUEUE_WAIT_S = 2.0
LEO = {"position_gcrs_km": [7000.0, 0.0, 0.0], "velocity_gcrs_km_per_s": [0.0, 7.546049, 0.0]}


@pytest.fixture(scope="module")
def server():
    env = {"TAUBUDGET_COMPUTE_DEADLINE_SECONDS": str(DEADLINE_S),
           "TAUBUDGET_MAX_NUMERICAL_REVOLUTIONS": "100000", "TAUBUDGET_MAX_CONCURRENT_COMPUTATIONS": "2",
           "TAUBUDGET_COMPUTE_QUEUE_WAIT_SECONDS": str(QUEUE_WAIT_S),
           "TAUBUDGET_HEADER_TIMEOUT_SECONDS": str(HEADER_TIMEOUT_S)}
    # The bound is about this server's event loop, not about the other tenants of a shared CI
    # machine: the server and the probing thread run at a raised priority (as root; else as is).
    try:
        with running_server(env, niceness=SERVER_NICENESS) as base:
            yield base, int(base.rsplit(":", 1)[1]), None
    except ServerFailed as exc:
        pytest.fail(str(exc))


def _long_numerical(epoch: str = "2027-04-15T00:00:00Z") -> dict:
    """~650 LEO orbits of DOP853 from the epoch back to the span: ~20 s of work, over the deadline."""
    return {"orbit": {"type": "state_vector", "epoch": epoch, **LEO,
                      "force_model": {"earth_zonal_degree": 2, "sun": False, "moon": False}},
            "reference": "TT", "start": "2027-03-02T00:00:00Z", "duration_days": 1.0}


def _worst_batch() -> bytes:
    oem = circular_oem(40_000)  # 27.8 days of 60 s states, ~3.6 MB
    items = [{"id": f"slice-{k:02d}", "start": f"2027-03-{1 + k // 4:02d}T{6 * (k % 4):02d}:00:00Z"}
             for k in range(50)]
    body = json.dumps({"defaults": {"orbit": {"type": "oem", "text": oem}, "duration_days": 0.25,
                                    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}},
                       "items": items}).encode()
    assert len(body) < 5_000_000  # under the default body limit
    return body


def test_healthz_stays_fast_under_a_worst_case_batch_and_a_deadline(server):
    base, _, _ = server
    body = _worst_batch()
    out: dict = {}

    def post(name, **kw):
        with httpx.Client(base_url=base, timeout=120.0) as c:
            t0 = time.monotonic()
            out[name] = (c.post(**kw), time.monotonic() - t0)

    workers = [threading.Thread(target=post, args=("batch",),
                                kwargs={"url": "/v1/budgets/batch", "content": body}),
               threading.Thread(target=post, args=("slow",),
                                kwargs={"url": "/v1/budgets", "json": _long_numerical()})]
    for w in workers:
        w.start()
    latencies = []
    with contextlib.suppress(PermissionError, OSError):  # this probing thread only
        os.setpriority(os.PRIO_PROCESS, threading.get_native_id(), SERVER_NICENESS)
    with httpx.Client(base_url=base, timeout=10.0) as probe:
        while any(w.is_alive() for w in workers):
            t0 = time.monotonic()
            assert probe.get("/healthz").status_code == 200
            latencies.append(time.monotonic() - t0)
            time.sleep(0.05)
    for w in workers:
        w.join()
    batch, _ = out["batch"]
    assert batch.status_code == 200, batch.text[:500]
    assert batch.json()["succeeded"] == 50
    slow, slow_s = out["slow"]
    assert slow.status_code == 504, slow.text
    assert slow.json()["limit_name"] == "COMPUTE_DEADLINE_SECONDS"
    assert slow_s < DEADLINE_S + 3.0  # stopped soon after the deadline, not after ~20 s
    assert len(latencies) > 20
    ordered = sorted(latencies)
    assert ordered[(95 * len(ordered)) // 100] < PROBE_LIMIT_S, ordered[-5:]
    assert ordered[-1] < PROBE_WORST_S, ordered[-5:]


def test_disconnected_clients_free_their_slots(server):
    base, _, _ = server
    gone = []

    def abandon():
        with httpx.Client(base_url=base, timeout=0.5) as c:
            try:
                c.post("/v1/budgets", json=_long_numerical())
            except httpx.TimeoutException:
                gone.append(True)

    threads = [threading.Thread(target=abandon) for _ in range(2)]  # both slots taken
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert gone == [True, True]
    # Without cancellation both slots stay busy until the deadline (6 s) and this request,
    # waiting at most 2 s for a slot, gets a 503.
    cheap = {"orbit": {"type": "surface", "latitude_deg": 5.0, "longitude_deg": 5.0},
             "reference": "TT", "start": "2027-03-02T00:00:00Z", "duration_days": 1.0}
    with httpx.Client(base_url=base, timeout=30.0) as c:
        r = c.post("/v1/budgets", json=cheap)
    assert r.status_code == 200, r.text


def test_half_sent_headers_are_cut_off(server):
    _, port, _ = server
    with socket.create_connection(("127.0.0.1", port), timeout=10.0) as s:
        s.sendall(b"GET /healthz HTTP/1.1\r\nHost: 127.0.0.1\r\nX-Slow: ")
        t0 = time.monotonic()
        data = s.recv(1024)  # b"" once the server closes the connection
        waited = time.monotonic() - t0
    assert data == b""
    assert HEADER_TIMEOUT_S - 0.2 < waited < HEADER_TIMEOUT_S + 3.0
