"""Contact-plan requests that name a packaged ground network instead of listing stations.

Outside truth: the sample file sample_orbits/ground_network.json itself (the packaged copy must be
the same network) and the sample README (it must list every contact-plan sample it ships).
"""

from __future__ import annotations

import json
from pathlib import Path

from taubudget.app.schemas.contacts import station_networks

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"


def test_packaged_network_is_the_one_the_sample_readme_describes():
    readme = (SAMPLES / "README.md").read_text()
    network = station_networks()["ground_network"]
    assert len(network) == 4
    for s in network:
        lat = f"{abs(s['latitude_deg']):.2f}".rstrip("0").rstrip(".")
        assert f"{s['name']} ({lat}" in readme, s["name"]


def test_sample_readme_lists_the_contact_plans_and_the_network():
    readme = (SAMPLES / "README.md").read_text()
    for path in sorted(SAMPLES.glob("contact_plan_*.json")) + [SAMPLES / "ground_network.json"]:
        assert f"`{path.name}`" in readme, path.name


def _plan_body(**changes):
    body = json.loads((SAMPLES / "contact_plan_meo.json").read_text())
    body["end"] = "2027-03-02T00:00:00Z"
    body.update(changes)
    return body


def test_stations_file_gives_the_same_passes_as_the_stations_written_out(client):
    written = client.post("/v1/contact-plans", json=_plan_body())
    body = _plan_body(stations_file="ground_network")
    body.pop("stations")
    named = client.post("/v1/contact-plans", json=body)
    assert written.status_code == 200 and named.status_code == 200, named.text
    key = [(p["station"], p["aos_utc"]) for p in written.json()["passes"]]
    assert key and key == [(p["station"], p["aos_utc"]) for p in named.json()["passes"]]


def test_a_path_is_not_a_station_file(client):
    body = _plan_body(stations_file="/etc/passwd")
    body.pop("stations")
    r = client.post("/v1/contact-plans", json=body)
    assert r.status_code == 422
    assert any(e["pointer"] == "/stations_file" for e in r.json()["errors"])


def test_no_stations_at_all_is_refused_naming_both_ways(client):
    body = _plan_body()
    body.pop("stations")
    r = client.post("/v1/contact-plans", json=body)
    assert r.status_code == 422 and "stations_file" in r.text and "ground_network" in r.text


def test_cli_runs_the_smallsat_sample_with_a_station_file():
    import subprocess
    import sys
    run = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "contacts",
                          str(SAMPLES / "contact_plan_smallsat_csac.json"), "--json"],
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    plan = json.loads(run.stdout)
    assert {p["station"] for p in plan["passes"]} <= {"Vellmar Ridge", "Korrin Atoll", "Saldane Plateau",
                                                        "Brisk Hollow"}
    assert plan["model"]["clock"] == "chip_scale_atomic"
