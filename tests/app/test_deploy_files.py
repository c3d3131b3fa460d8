"""deploy/ files parse and run the same command on the same port as README.md's main job."""

from __future__ import annotations

import json
import re
import shlex
from pathlib import Path

import yaml
from taubudget.app.cli import build_parser

REPO = Path(__file__).resolve().parents[2]
DEPLOY = REPO / "deploy"
CONTAINER_COMMAND = ["taubudget", "serve", "--host", "0.0.0.0", "--port", "8000"]


def _readme_serve_port() -> int:
    """Port of the `taubudget serve` command in README.md (the CLI default if it names none)."""
    readme = REPO / "README.md"
    assert readme.exists(), "README.md is missing"
    lines = [ln for ln in readme.read_text().splitlines() if re.search(r"taubudget serve\b", ln)]
    assert lines, "README.md has no `taubudget serve` command"
    cmd = shlex.split(lines[0].split("&&")[-1].strip())
    i = next(k for k, tok in enumerate(cmd) if tok.endswith("taubudget")) + 1
    args = build_parser().parse_args(cmd[i:])
    assert args.verb == "serve"
    return args.port


def _containerfile_cmd() -> list[str]:
    text = (DEPLOY / "Containerfile").read_text()
    cmds = [ln for ln in text.splitlines() if ln.startswith("CMD ")]
    assert len(cmds) == 1
    return json.loads(cmds[0][4:])


def test_containerfile_command_and_port():
    assert _containerfile_cmd() == CONTAINER_COMMAND
    text = (DEPLOY / "Containerfile").read_text()
    assert "EXPOSE 8000" in text
    # the command is valid for our own CLI
    args = build_parser().parse_args(CONTAINER_COMMAND[1:])
    assert (args.host, args.port) == ("0.0.0.0", 8000)


def test_compose_runs_the_same_command():
    compose = yaml.safe_load((DEPLOY / "compose.yaml").read_text())
    svc = compose["services"]["taubudget"]
    assert svc["command"] == CONTAINER_COMMAND
    assert svc["ports"] == ["8000:8000"]
    # the build context is relative to the compose file; the Containerfile lies inside it
    context = (DEPLOY / svc["build"]["context"]).resolve()
    assert context == REPO and (context / svc["build"]["dockerfile"]).is_file()


def test_kubernetes_deployment_and_service():
    dep = yaml.safe_load((DEPLOY / "k8s" / "deployment.yaml").read_text())
    svc = yaml.safe_load((DEPLOY / "k8s" / "service.yaml").read_text())
    assert (dep["kind"], svc["kind"]) == ("Deployment", "Service")
    (container,) = dep["spec"]["template"]["spec"]["containers"]
    assert container["command"] == CONTAINER_COMMAND
    ports = {p["name"]: p["containerPort"] for p in container["ports"]}
    assert ports == {"http": 8000}
    assert container["livenessProbe"]["httpGet"]["path"] == "/healthz"
    assert container["readinessProbe"]["httpGet"]["path"] == "/readyz"
    assert {"cpu", "memory"} <= container["resources"]["requests"].keys()
    assert svc["spec"]["selector"] == dep["spec"]["selector"]["matchLabels"]
    assert [p["targetPort"] for p in svc["spec"]["ports"]] == [8000]


def test_same_port_as_readme():
    assert _readme_serve_port() == int(CONTAINER_COMMAND[-1])
