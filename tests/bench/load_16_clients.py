"""16-client load on a real `taubudget serve` over loopback (not part of the test run).

Run: .venv/bin/python tests/bench/load_16_clients.py [--seconds 20] [--workers 1 2]

For each worker count it starts the server on a free loopback port, waits for /readyz, then
runs 16 client threads for ``--seconds``, each sending a fixed mix of request kinds in turn
(small budget, seven-day MEO with tides and a series, spreadsheet field, two-item batch,
liveness probe). It prints throughput (requests/s, all kinds) and p50/p99 latency per kind, and
the count of non-2xx answers per status. Wall-clock figures on a shared machine: compare runs
made on the same machine at the same time only.
"""

from __future__ import annotations

import argparse
import json
import os
import socket
import subprocess
import sys
import threading
import time
from collections import defaultdict
from pathlib import Path

import httpx
import numpy as np

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO))
CLIENTS = 16

SMALL = {"orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
                   "eccentricity": 0.0, "inclination_deg": 55.0},
         "reference": "TT", "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
         "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False}, "series_step_s": 900}
MEO_WEEK = json.loads((REPO / "sample_orbits" / "meo_navigation.json").read_text())
FIELD = {"semi_major_axis_km": 26561.4, "eccentricity": 0.01, "inclination_deg": 55.0,
         "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "field": "mean_rate_us_per_day"}
BATCH = {"defaults": {"reference": "GPS", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
                      "gravity": {"earth_zonal_degree": 2, "sun": True, "moon": True}},
         "items": [{"id": f"b{k}", "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                                            "semi_major_axis_km": 26561.4, "eccentricity": 0.01 * k,
                                            "inclination_deg": 55.0}} for k in range(2)]}

KINDS = [
    ("budget_small", lambda c: c.post("/v1/budgets", json=SMALL)),
    ("budget_meo_week", lambda c: c.post("/v1/budgets", json=MEO_WEEK)),
    ("csv_field", lambda c: c.get("/v1/budgets.csv", params=FIELD)),
    ("batch_2", lambda c: c.post("/v1/budgets/batch", json=BATCH)),
    ("healthz", lambda c: c.get("/healthz")),
]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _start(workers: int):
    port = _free_port()
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    proc = subprocess.Popen([sys.executable, "-m", "taubudget.app.cli", "serve", "--host", "127.0.0.1",
                             "--port", str(port), "--workers", str(workers), "--log-level", "warning"],
                            cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    base = f"http://127.0.0.1:{port}"
    t0 = time.monotonic()
    with httpx.Client(base_url=base, timeout=5.0) as c:
        while True:
            try:
                # every worker must be ready: ask a few times
                if all(c.get("/readyz").status_code == 200 for _ in range(4 * workers)):
                    break
            except httpx.TransportError:
                pass
            if time.monotonic() - t0 > 120 or proc.poll() is not None:
                raise SystemExit("server did not become ready")
            time.sleep(0.2)
    return proc, base


def run(workers: int, seconds: float) -> dict:
    proc, base = _start(workers)
    latencies: dict[str, list[float]] = defaultdict(list)
    statuses: dict[str, dict[int, int]] = defaultdict(lambda: defaultdict(int))
    lock = threading.Lock()
    stop_at = time.monotonic() + seconds

    def client(k: int):
        with httpx.Client(base_url=base, timeout=120.0) as c:
            i = k
            while time.monotonic() < stop_at:
                name, send = KINDS[i % len(KINDS)]
                t0 = time.monotonic()
                r = send(c)
                dt = time.monotonic() - t0
                with lock:
                    latencies[name].append(dt)
                    statuses[name][r.status_code] += 1
                i += 1

    try:
        t0 = time.monotonic()
        threads = [threading.Thread(target=client, args=(k,)) for k in range(CLIENTS)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        wall = time.monotonic() - t0
    finally:
        proc.terminate()
        proc.wait(timeout=30)
    total = sum(len(v) for v in latencies.values())
    return {"workers": workers, "wall_s": wall, "requests": total, "throughput_per_s": total / wall,
            "kinds": {n: {"n": len(v), "p50_ms": 1e3 * float(np.percentile(v, 50)),
                          "p99_ms": 1e3 * float(np.percentile(v, 99)),
                          "statuses": dict(statuses[n])} for n, v in sorted(latencies.items())}}


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--seconds", type=float, default=20.0)
    p.add_argument("--workers", type=int, nargs="+", default=[1, 2])
    args = p.parse_args()
    print(f"16 clients, {args.seconds:g} s per run, loopback; machine load {os.getloadavg()[0]:.1f} "
          f"on {os.cpu_count()} cores")
    for w in args.workers:
        res = run(w, args.seconds)
        print(f"\nworkers={w}: {res['requests']} requests in {res['wall_s']:.1f} s = "
              f"{res['throughput_per_s']:.1f} req/s")
        print(f"  {'kind':<16} {'n':>6} {'p50 ms':>9} {'p99 ms':>9}  statuses")
        for name, k in res["kinds"].items():
            print(f"  {name:<16} {k['n']:>6} {k['p50_ms']:>9.1f} {k['p99_ms']:>9.1f}  {k['statuses']}")


if __name__ == "__main__":
    main()
