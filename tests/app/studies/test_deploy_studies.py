"""deploy/: the Dask scheduler and workers of compose and Kubernetes are wired to the API the way
the external-cluster test runs them (same CLI flags, the scheduler address the API is given)."""

from __future__ import annotations

from pathlib import Path

import yaml

DEPLOY = Path(__file__).resolve().parents[3] / "deploy"


def _option(cmd: list[str], name: str) -> str:
    return cmd[cmd.index(name) + 1]


def test_compose_api_uses_the_compose_scheduler_and_keeps_its_store_in_a_volume():
    services = yaml.safe_load((DEPLOY / "compose.yaml").read_text())["services"]
    api, scheduler, worker = services["taubudget"], services["dask-scheduler"], services["dask-worker"]
    port = _option(scheduler["command"], "--port")
    assert scheduler["command"][:2] == ["dask", "scheduler"]
    assert api["environment"]["TAUBUDGET_DASK_SCHEDULER_ADDRESS"] == f"tcp://dask-scheduler:{port}"
    assert worker["command"][:3] == ["dask", "worker", f"tcp://dask-scheduler:{port}"]
    assert _option(worker["command"], "--nthreads") == "1"
    assert scheduler["image"] == worker["image"] == api["image"]  # workers import the project
    data_dir = api["environment"]["TAUBUDGET_DATA_DIR"]
    assert any(v.endswith(":" + data_dir) for v in api["volumes"])


def test_kubernetes_workers_reach_the_scheduler_service_the_api_is_given():
    docs = list(yaml.safe_load_all((DEPLOY / "k8s" / "dask.yaml").read_text()))
    by_name = {(d["kind"], d["metadata"]["name"]): d for d in docs}
    svc = by_name[("Service", "taubudget-dask-scheduler")]
    sched = by_name[("Deployment", "taubudget-dask-scheduler")]
    worker = by_name[("Deployment", "taubudget-dask-worker")]
    assert svc["spec"]["selector"] == sched["spec"]["selector"]["matchLabels"]
    (sched_c,) = sched["spec"]["template"]["spec"]["containers"]
    (worker_c,) = worker["spec"]["template"]["spec"]["containers"]
    port = int(_option(sched_c["command"], "--port"))
    assert [p["targetPort"] for p in svc["spec"]["ports"]] == [port]
    address = f"tcp://{svc['metadata']['name']}:{svc['spec']['ports'][0]['port']}"
    assert worker_c["command"][:3] == ["dask", "worker", address]
    api = yaml.safe_load((DEPLOY / "k8s" / "deployment.yaml").read_text())
    (api_c,) = api["spec"]["template"]["spec"]["containers"]
    env = {e["name"]: e for e in api_c["env"]}
    assert env["TAUBUDGET_DASK_SCHEDULER_ADDRESS"]["value"] == address
    assert "secretKeyRef" in env["TAUBUDGET_DATABASE_URL"]["valueFrom"]
    assert sched_c["image"] == worker_c["image"] == api_c["image"]
