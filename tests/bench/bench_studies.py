"""Studies benchmark (not part of the test run): throughput, memory and overhead of /v1/studies.

Run: .venv/bin/python tests/bench/bench_studies.py [--items 1000] [--satellites 24] [--years 15]

Prints:
1. items/s of a 1,000-budget sweep (circular orbits 7,000..42,164 km, one day, J2..J4 + Sun and
   Moon) on the embedded cluster with 1 and with 2 worker processes, and on an external cluster
   (a real `dask scheduler` + two `dask worker` processes on loopback). The clock starts when the
   dispatcher leases the study (cluster start-up excluded: a small study warms it first) and stops
   at the last stored result.
2. a 24-satellite x 15-year study (three planes of eight MEO clocks, one item per satellite over
   the whole life): wall time and peak resident memory of the server process and of each worker.
3. the sweep's overhead per item: the study's time per item on one worker against a direct call
   (the physics' ``compute_budget`` on prebuilt inputs, and the whole request path in-process).

Wall times on a shared machine vary with its load; the ratios are the point.
"""

from __future__ import annotations

import argparse
import os
import signal
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import psutil  # noqa: E402  (a dependency of distributed)
from fastapi.testclient import TestClient  # noqa: E402
from support.studies import dask_command, free_port, wait_finished  # noqa: E402
from taubudget.app.main import create_app  # noqa: E402
from taubudget.app.settings import Settings  # noqa: E402

FULL_GRAVITY = {"earth_zonal_degree": 4, "sun": True, "moon": True}
BASE = {
    "orbit": {"type": "keplerian", "epoch": "2031-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
              "eccentricity": 0.001, "inclination_deg": 55.0, "ra_of_asc_node_deg": 30.0,
              "mean_anomaly_deg": 10.0},
    "reference": "TT", "start": "2031-03-01T00:00:00Z", "duration_days": 1.0, "gravity": FULL_GRAVITY,
}


def sweep(n: int) -> dict:
    return {"defaults": BASE, "sweep": {"parameters": [
        {"field": "orbit.semi_major_axis_km", "start": 7000.0, "stop": 42164.0, "count": n}]}}


def constellation(satellites: int, years: float) -> dict:
    planes = 3
    per_plane = satellites // planes
    orbits = [{**BASE["orbit"], "semi_major_axis_km": 29600.0, "inclination_deg": 56.0,
               "ra_of_asc_node_deg": 120.0 * p, "mean_anomaly_deg": 360.0 / per_plane * k + 15.0 * p}
              for p in range(planes) for k in range(per_plane)]
    return {"name": "constellation life", "defaults": {**BASE, "duration_days": 365.25 * years},
            "items": [{"id": f"sat-{i + 1:02d}", "orbit": o} for i, o in enumerate(orbits)]}


def run(client, body, timeout_s=3600.0) -> dict:
    resp = client.post("/v1/studies", json=body)
    assert resp.status_code == 202, resp.text
    status = wait_finished(client.get, resp.json()["id"], timeout_s=timeout_s, poll_s=0.2)
    assert status["state"] == "done" and status["failed"] == 0, status
    return status


def throughput(settings: Settings, n: int) -> float:
    with TestClient(create_app(settings)) as c:
        run(c, sweep(4))  # start the cluster and load the workers' data
        status = run(c, sweep(n))
    return n / status["elapsed_s"]


class RssSampler:
    """Peak RSS of this process and of each child process, sampled every 0.2 s."""

    def __init__(self):
        self.me = psutil.Process()
        self.peak_server = 0
        self.peak_children: dict[int, int] = {}
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self._stop.is_set():
            self.peak_server = max(self.peak_server, self.me.memory_info().rss)
            for child in self.me.children(recursive=True):
                try:
                    rss = child.memory_info().rss
                except psutil.Error:
                    continue
                self.peak_children[child.pid] = max(self.peak_children.get(child.pid, 0), rss)
            self._stop.wait(0.2)

    def __enter__(self):
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()


def external_cluster():
    port = free_port()
    address = f"tcp://127.0.0.1:{port}"
    procs = [subprocess.Popen([dask_command(), "scheduler", "--host", "127.0.0.1", "--port", str(port),
                               "--no-dashboard"], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                              start_new_session=True)]
    procs += [subprocess.Popen([dask_command(), "worker", address, "--nworkers", "1", "--nthreads", "1",
                                "--no-dashboard"], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                               start_new_session=True) for _ in range(2)]
    from distributed import Client

    with Client(address, timeout="60s", set_as_default=False) as c:
        c.wait_for_workers(2, timeout=300)
    return address, procs


def direct_per_item_s(n: int) -> tuple[float, float]:
    """Seconds per item of (compute_budget on prebuilt inputs, the whole request path), in-process."""
    from taubudget.app.schemas import BudgetRequest
    from taubudget.app.services.budget import budget_inputs
    from taubudget.app.settings import get_settings
    from taubudget.app.studies.expand import Sweep
    from taubudget.app.studies.items import item_request, item_settings, run_request
    from taubudget.physics.budget import compute_budget

    settings = item_settings(get_settings())
    bodies = [item_request(BASE, p, None) for p in Sweep.model_validate(sweep(n)["sweep"]).combinations()]
    inputs = [budget_inputs(BudgetRequest.model_validate(b), settings) for b in bodies]
    compute_budget(inputs[0])  # warm caches (ephemeris, environment of the span)
    t0 = time.perf_counter()
    for x in inputs:
        compute_budget(x)
    physics = (time.perf_counter() - t0) / n
    t0 = time.perf_counter()
    for b in bodies:
        assert run_request("budget", b, settings)[0] == 200
    whole = (time.perf_counter() - t0) / n
    return physics, whole


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--items", type=int, default=1000)
    ap.add_argument("--satellites", type=int, default=24)
    ap.add_argument("--years", type=float, default=15.0)
    ap.add_argument("--parts", default="123", help="which parts to run (e.g. 23)")
    args = ap.parse_args()
    data = Path(tempfile.mkdtemp(prefix="taubudget-bench-"))
    print(f"machine: {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f}")

    if "1" in args.parts:
        part1(args, data)
    if "2" in args.parts:
        part2(args, data)
    if "3" in args.parts:
        part3(args, data)


def part1(args, data: Path) -> None:
    print(f"\n1. {args.items}-budget sweep (1 day each, J2..J4 + Sun + Moon), items/s:")
    rates = {}
    for workers in (1, 2):
        s = Settings(DATA_DIR=str(data / f"embedded{workers}"), DASK_WORKERS=workers)
        rates[f"embedded, {workers} worker(s)"] = throughput(s, args.items)
    address, procs = external_cluster()
    try:
        s = Settings(DATA_DIR=str(data / "external"), DASK_SCHEDULER_ADDRESS=address)
        rates["external cluster, 2 workers"] = throughput(s, args.items)
    finally:
        for p in procs:
            os.killpg(p.pid, signal.SIGKILL)
            p.wait()
    for name, r in rates.items():
        print(f"   {name:<30} {r:8.1f} items/s")


def part2(args, data: Path) -> None:
    print(f"\n2. {args.satellites}-satellite x {args.years:g}-year study (embedded, 2 workers):")
    s = Settings(DATA_DIR=str(data / "constellation"), DASK_WORKERS=2)
    with TestClient(create_app(s)) as c:
        run(c, sweep(2))
        with RssSampler() as rss:
            t0 = time.perf_counter()
            status = run(c, constellation(args.satellites, args.years))
            wall = time.perf_counter() - t0
        lines = c.get(f"/v1/studies/{status['id']}/results.csv").text.count("\n") - 3
    mib = 1 / 2**20
    workers = sorted(rss.peak_children.values(), reverse=True)[:2]
    print(f"   wall time {wall:.1f} s for {status['total']} items ({lines} CSV rows), "
          f"{wall / status['total']:.2f} s per satellite-life on 2 workers")
    print(f"   peak RSS: server {rss.peak_server * mib:.0f} MiB; workers "
          + ", ".join(f"{w * mib:.0f} MiB" for w in workers))


def part3(args, data: Path) -> None:
    n = min(args.items, 200)
    physics, whole = direct_per_item_s(n)
    s = Settings(DATA_DIR=str(data / "overhead"), DASK_WORKERS=1)
    per_item = 1 / throughput(s, n)
    print(f"\n3. overhead per item ({n} items, 1 worker):")
    print(f"   compute_budget (prebuilt inputs)   {physics * 1e3:8.2f} ms")
    print(f"   whole request path, in-process     {whole * 1e3:8.2f} ms")
    print(f"   study item on the embedded cluster {per_item * 1e3:8.2f} ms "
          f"(overhead {1e3 * (per_item - physics):.2f} ms over compute_budget, "
          f"{1e3 * (per_item - whole):.2f} ms over the request path)")


if __name__ == "__main__":
    main()
