"""A real ``taubudget serve`` process on a free loopback port, for end-to-end tests."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
from contextlib import contextmanager, suppress
from pathlib import Path

import httpx

REPO = Path(__file__).resolve().parents[2]
STARTUP_TIMEOUT_S = 60.0  # imports plus loading DE421 on a busy 2-core machine


class ServerFailed(RuntimeError):
    pass


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextmanager
def running_server(env: dict | None = None, workers: int = 1, niceness: int | None = None):
    """Start ``taubudget serve`` on 127.0.0.1, wait for /readyz, yield its base URL, stop it.

    ``env``: extra TAUBUDGET_* settings; ``workers``: uvicorn worker processes; ``niceness``: the
    server's scheduling priority (negative needs root; left as is where the system refuses)."""
    port = free_port()
    full_env = {**os.environ, "PYTHONPATH": str(REPO), **(env or {})}

    def set_priority():  # in the child, before exec
        if niceness is not None:
            with suppress(OSError):
                os.setpriority(os.PRIO_PROCESS, 0, niceness)

    proc = subprocess.Popen(
        [sys.executable, "-m", "taubudget.app.cli", "serve", "--host", "127.0.0.1", "--port", str(port),
         "--workers", str(workers), "--log-level", "warning"],
        cwd=REPO, env=full_env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, preexec_fn=set_priority,
    )
    base = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + STARTUP_TIMEOUT_S
        with httpx.Client(base_url=base, timeout=5.0) as c:
            while True:
                if proc.poll() is not None:
                    raise ServerFailed(f"server exited: {proc.stdout.read().decode(errors='replace')}")
                try:
                    if all(c.get("/readyz").status_code == 200 for _ in range(2 * workers)):
                        break
                except httpx.TransportError:
                    pass
                if time.monotonic() > deadline:
                    raise ServerFailed("server did not become ready")
                time.sleep(0.1)
        yield base
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:  # pragma: no cover
            proc.kill()
            proc.wait()
        proc.stdout.close()
