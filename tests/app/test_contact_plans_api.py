"""POST /v1/contact-plans and .csv, and the 'taubudget contacts' CLI verb."""

import json
import subprocess
import sys
from pathlib import Path

from support.csv_blocks import split_blocks

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
PASS_FIELDS = {"station", "aos_utc", "los_utc", "duration_s", "max_elevation_deg",
               "offset_at_aos_ns", "offset_at_los_ns"}  # issue 5 contract


def _body(name="contact_plan_meo.json"):
    return json.loads((SAMPLES / name).read_text())


def test_contact_plan_contract(client):
    r = client.post("/v1/contact-plans", json=_body())
    assert r.status_code == 200, r.text
    plan = r.json()
    assert {"passes", "syncs", "worst_error_ns", "worst_gap_s", "meets_budget", "caution"} <= plan.keys()
    assert plan["passes"] and PASS_FIELDS <= plan["passes"][0].keys()
    # A verdict of 'met' must hold for the reported worst error (k-sigma envelope <= budget).
    if plan["meets_budget"]:
        assert plan["worst_error_ns"] <= plan["time_error_budget_ns"]
    # AOS precedes LOS and the duration is their difference.
    p = plan["passes"][0]
    assert p["duration_s"] > 0


def test_contact_plan_csv_matches_json(client):
    body = _body("contact_plan_leo.json")
    plan = client.post("/v1/contact-plans", json=body).json()
    r = client.post("/v1/contact-plans.csv", content=json.dumps(body))  # no JSON content type
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/csv")
    fields, rows = split_blocks(r.text)
    assert fields["recommendation"] == plan["recommendation"]["summary"]
    assert len(rows) == len(plan["passes"])
    assert float(rows[0]["duration_s"]) == plan["passes"][0]["duration_s"]
    assert "Planning estimate" in r.text


def test_contact_plan_errors_name_fields(client, problem_of):
    body = _body()
    body["stations"][0]["latitude_deg"] = 123.0
    r = client.post("/v1/contact-plans", json=body)
    problem = problem_of(r, 422)
    assert any(e["pointer"].startswith("/stations/0/latitude_deg") for e in problem["errors"])
    body = _body()
    body["clock"] = {"preset": "no_such_oscillator"}
    problem = problem_of(client.post("/v1/contact-plans", json=body), 422)
    assert any(e["pointer"].startswith("/clock/preset") for e in problem["errors"])


def test_cli_contacts_table_and_json(tmp_path):
    path = SAMPLES / "contact_plan_leo.json"
    out = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "contacts", str(path), "--json"],
                         capture_output=True, text=True, check=True)
    plan = json.loads(out.stdout)
    assert plan["passes"] and "meets_budget" in plan
    table = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "contacts", str(path)],
                           capture_output=True, text=True, check=True).stdout
    assert "worst error" in table and "Planning estimate" in table
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps({**_body(), "stations": []}))
    res = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "contacts", str(bad)],
                         capture_output=True, text=True)
    assert res.returncode == 2 and "stations" in res.stderr
