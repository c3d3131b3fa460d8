"""Contact plans read without JSON: the recommendation in words, the free-running column labelled,
the error with syncs applied, in the CLI table and the CSV (parsed back with the csv module).

Outside truth: the csv module (RFC 4180 reader); the plan's own budget (a plan that meets it keeps
the synced bound inside it, while the free-running offset may leave it).
"""

from __future__ import annotations

import csv
import io
import json
import re
import subprocess
import sys
from pathlib import Path

import pytest

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
CLI = [sys.executable, "-m", "taubudget.app.cli"]
SUMMARY = re.compile(r"sync at least every ([0-9.]+) h / every (pass|\d+(?:st|nd|rd|th) eligible pass) "
                     r"to keep 3-sigma within 10 ns")


@pytest.fixture(scope="module")
def plan(client):
    body = json.loads((SAMPLES / "contact_plan_meo.json").read_text())
    r = client.post("/v1/contact-plans", json=body)
    assert r.status_code == 200, r.text
    return r.json()


def test_recommendation_in_words_matches_its_numbers(plan):
    rec = plan["recommendation"]
    m = SUMMARY.search(rec["summary"])
    assert m, rec["summary"]
    assert float(m.group(1)) == pytest.approx(rec["max_time_between_syncs_s"] / 3600.0, rel=5e-3)
    stride = rec["largest_pass_stride_meeting_budget"]
    if stride == 1:
        assert m.group(2) == "pass"
    else:
        assert m.group(2).startswith(f"{stride}") and m.group(2).endswith("eligible pass")


def test_synced_bound_stays_in_budget_while_the_free_running_offset_leaves_it(plan):
    assert plan["meets_budget"]
    budget = plan["time_error_budget_ns"]
    assert all(p["bound_at_aos_with_syncs_ns"] <= budget * (1 + 1e-9) for p in plan["passes"])
    assert max(abs(p["offset_at_aos_ns"]) for p in plan["passes"]) > budget


def test_cli_table_labels_the_columns_and_prints_the_recommendation():
    run = subprocess.run([*CLI, "contacts", str(SAMPLES / "contact_plan_meo.json")], capture_output=True,
                         text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    words = " ".join(run.stdout.split())  # the legend and summary are wrapped: compare the words
    assert "free-run ns: offset at AOS running free since the span start, ignoring every sync" in words
    assert "3sig w/ syncs" in run.stdout
    assert SUMMARY.search(words)
    assert "largest error just before a sync" in words
    assert "pre-sync ns: |time error| + 3 sigma just before the sync at that pass" in words


def test_each_sync_pass_carries_the_error_just_before_it(plan):
    before = {s["pass_index"]: s["bound_before_sync_ns"] for s in plan["syncs"]}
    for i, p in enumerate(plan["passes"]):
        assert p["bound_before_sync_ns"] == before.get(i)
        assert (p["bound_before_sync_ns"] is not None) == (i in before)


def test_pass_csv_carries_metadata_as_rows_and_the_synced_columns():
    run = subprocess.run([*CLI, "contacts", str(SAMPLES / "contact_plan_meo.json"), "--csv"],
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    rows = list(csv.reader(io.StringIO(run.stdout)))
    assert rows[0] == ["field", "value"]
    blank = rows.index([])
    meta = dict(rows[1:blank])
    assert SUMMARY.search(meta["recommendation"])
    assert meta["caution"].startswith("Planning estimate only.")  # one cell, commas and all
    assert "ignoring syncs" in meta["offset_at_aos_ns"]
    header, body = rows[blank + 1], rows[blank + 2:]
    assert {"offset_at_aos_ns", "error_at_aos_with_syncs_ns", "bound_at_aos_with_syncs_ns"} <= set(header)
    assert body and all(len(r) == len(header) for r in body)
    i = header.index("bound_at_aos_with_syncs_ns")
    assert max(float(r[i]) for r in body) <= 10.0
    j = header.index("bound_before_sync_ns")
    synced = [r for r in body if r[header.index("used_for_sync")] == "true"]
    assert synced and all(r[j] != "" and float(r[j]) <= 10.0 for r in synced)
