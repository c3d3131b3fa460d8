"""Helpers for the study tests: waiting for a study, reading its JSON lines and CSV, a small sweep."""

from __future__ import annotations

import csv
import io
import json
import time

FINISHED = ("done", "failed", "cancelled")

# Circular point-mass orbits (no Sun, Moon or zonal terms) over half a day: the mean rate has a
# closed form, (L_G - 3 GM / (2 a c^2)) / (1 - L_G) (DESIGN.md; TN36 eq. 10.6 with v^2 = GM/a).
POINT_MASS_BASE = {
    "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
              "eccentricity": 0.0, "inclination_deg": 55.0, "ra_of_asc_node_deg": 30.0,
              "mean_anomaly_deg": 10.0},
    "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 0.5,
    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False},
}


def altitude_sweep(values_km, eccentricities=(0.0,)) -> dict:
    return {"kind": "budget", "name": "altitude trade", "defaults": POINT_MASS_BASE,
            "sweep": {"mode": "grid", "parameters": [
                {"field": "orbit.semi_major_axis_km", "values": list(values_km)},
                {"field": "orbit.eccentricity", "values": list(eccentricities)}]}}


def wait_finished(get, study_id: str, timeout_s: float = 300.0, poll_s: float = 0.25) -> dict:
    """Poll GET /v1/studies/{id} (``get``: a callable taking a path) until the study has finished."""
    deadline = time.monotonic() + timeout_s
    while True:
        status = get(f"/v1/studies/{study_id}").json()
        if status["state"] in FINISHED:
            return status
        if time.monotonic() > deadline:
            raise AssertionError(f"study {study_id} did not finish within {timeout_s} s: {status}")
        time.sleep(poll_s)


def json_lines(text: str) -> list[dict]:
    return [json.loads(line) for line in text.splitlines() if line]


def csv_rows(text: str) -> list[dict]:
    """The table of a batch or study CSV: the rows after the field,value block and its empty row."""
    lines = text.splitlines()
    assert lines[0] == "field,value" and "" in lines, lines[:4]
    body = "\n".join(lines[lines.index("") + 1:])
    return list(csv.DictReader(io.StringIO(body)))


def free_port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def closed_form_rate(a_km: float) -> float:
    """Circular point-mass rate against TT, (L_G - 3 GM / (2 a c^2)) / (1 - L_G): DESIGN.md, TN36 eq. 10.6."""
    from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, L_G

    return (L_G - 1.5 * GM_EARTH_TCG_M3_PER_S2 / (a_km * 1e3 * C2_M2_PER_S2)) / (1 - L_G)


def dask_command() -> str:
    """The `dask` command of this environment (installed with dask[distributed])."""
    import sys
    from pathlib import Path

    return str(Path(sys.executable).parent / "dask")


def kill_group(proc) -> None:
    """SIGKILL a process started with ``start_new_session=True`` and everything in its session."""
    import os
    import signal

    try:
        os.killpg(proc.pid, signal.SIGKILL)
    except ProcessLookupError:
        pass
    proc.wait(30)
