"""The command line as a new user meets it: help text, CSV a reader can parse, a closed pipe,
and a stability result used as the budget's clock.

Outside truth: the csv module (RFC 4180 reader), Unix pipe conventions (a reader that stops early
closes the pipe; the writer stops quietly with status 0 or 128 + SIGPIPE), and the white-FM closed
form sigma_y^2(tau) = h_0 / (2 tau) (NIST SP 1065, Table 8 / IEEE Std 1139): white frequency
noise of standard deviation s at tau0 has h_0 = 2 s^2 tau0.
"""

from __future__ import annotations

import csv
import io
import json
import signal
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
CLI = [sys.executable, "-m", "taubudget.app.cli"]
UNIX_PIPE_STATUSES = (0, 128 + signal.SIGPIPE)


def _run(*args, **kw):
    return subprocess.run([*CLI, *map(str, args)], capture_output=True, text=True, timeout=300, **kw)


def test_request_argument_has_help_text():
    for verb in ("budget", "contacts"):
        out = _run(verb, "--help").stdout
        assert "REQUEST" in out and "as JSON" in out and "'-' for stdin" in out


def test_budget_csv_parses_with_the_csv_module():
    body = json.loads((SAMPLES / "meo_navigation.json").read_text())
    body.pop("series_step_s")
    run = _run("budget", "-", "--csv", input=json.dumps(body))
    assert run.returncode == 0, run.stderr
    rows = list(csv.reader(io.StringIO(run.stdout)))
    values = {r[0]: r[1] for r in rows if len(r) == 2}
    assert float(values["mean_rate_us_per_day"]) == pytest.approx(38.5753, abs=1e-3)
    assert "clock_error.max_free_running_s" in values


@pytest.mark.parametrize("fmt", ["--json", "--csv", None])
def test_closed_pipe_ends_quietly(fmt):
    # The navigation sample prints ~190 kB of JSON (~100 kB CSV), more than a pipe buffer holds,
    # so the writer meets the closed pipe.
    args = [*CLI, "budget", str(SAMPLES / "meo_navigation.json")] + ([fmt] if fmt else [])
    proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    first = proc.stdout.read(64)
    proc.stdout.close()  # the reader stops, as 'head -c 64' would
    _, err = proc.communicate(timeout=300)
    assert first
    assert b"Traceback" not in err and b"BrokenPipe" not in err, err.decode()
    assert proc.returncode in UNIX_PIPE_STATUSES


WHITE_FM_SIGMA = 1e-12  # invented: a clock with white FM of ADEV 1e-12 at 1 s
H0_EXPECTED = 2.0 * WHITE_FM_SIGMA**2  # h_0 = 2 s^2 tau0 (tau0 = 1 s)
STATISTICAL = 0.15  # 4096 samples: the octave ADEV estimates scatter by a few to ~30 %


@pytest.fixture(scope="module")
def stability_json(tmp_path_factory):
    rng = np.random.default_rng(20270301)
    path = tmp_path_factory.mktemp("stab") / "white_fm.txt"
    path.write_text("\n".join(repr(float(v)) for v in rng.normal(0.0, WHITE_FM_SIGMA, 4096)))
    run = _run("stability", path, "--data-type", "frequency", "--sample-interval-s", "1", "--json")
    assert run.returncode == 0, run.stderr
    out = path.with_suffix(".json")
    out.write_text(run.stdout)
    return out


def test_stability_result_names_its_noise_and_carries_a_clock_block(stability_json):
    result = json.loads(stability_json.read_text())
    assert all(r["noise_type"] == "white_fm" for r in result["deviations"][:6])
    taus = [p[0] for p in result["clock_block"]["adev_points"]]
    assert taus[0] == 1.0 and len(taus) >= 3


def test_budget_takes_its_clock_from_a_stability_result(stability_json):
    run = _run("budget", SAMPLES / "meo_navigation.json", "--clock-from", stability_json, "--json")
    assert run.returncode == 0, run.stderr
    model = json.loads(run.stdout)["clock_error"]["clock_model"]
    assert model["source"] == "adev_points"
    assert model["h_alpha"]["white_fm"] == pytest.approx(H0_EXPECTED, rel=STATISTICAL)
    # the request's own drift and offsets stay (sample file: 1.5 ns at the sync, y0 = 2e-14)
    assert model["initial_time_offset_ns"] == pytest.approx(1.5)
    assert model["initial_fractional_frequency"] == 2e-14


def test_clock_from_a_file_without_a_clock_block_is_refused(tmp_path):
    bad = tmp_path / "not_stability.json"
    bad.write_text("{}")
    run = _run("budget", SAMPLES / "meo_navigation.json", "--clock-from", bad)
    assert run.returncode == 2 and "clock_block" in run.stderr and "Traceback" not in run.stderr


def test_stability_clock_block_posts_as_a_budget_clock(client):
    rng = np.random.default_rng(7)
    stab = client.post("/v1/clock-stability", json={
        "data": rng.normal(0.0, WHITE_FM_SIGMA, 4096).tolist(), "data_type": "frequency",
        "sample_interval_s": 1.0})
    assert stab.status_code == 200, stab.text
    body = json.loads((SAMPLES / "meo_navigation.json").read_text())
    body["clock"] = stab.json()["clock_block"]
    resp = client.post("/v1/budgets", json=body)
    assert resp.status_code == 200, resp.text
    h0 = resp.json()["clock_error"]["clock_model"]["h_alpha"]["white_fm"]
    assert h0 == pytest.approx(H0_EXPECTED, rel=STATISTICAL)
