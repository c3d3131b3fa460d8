"""CSV formula injection (OWASP "CSV Injection"): text cells that a spreadsheet would evaluate
are neutralised with a leading apostrophe; numbers, negative ones included, stay numbers."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest
from support.csv_blocks import split_blocks
from taubudget.app.csv_safety import TRIGGERS, safe_cell, safe_row, safe_text

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
HOSTILE = '=HYPERLINK("http://evil.example","x")'


@pytest.mark.parametrize("text", [HOSTILE, "+1+2", "-2+3", "@SUM(A1)", "\t=1", "\r=1", "-", "=",
                                  "-cmd|' /C calc'!A0"])
def test_text_that_starts_a_formula_is_quoted_as_text(text):
    out = safe_text(text)
    assert out == "'" + text
    assert not out.startswith(TRIGGERS)


@pytest.mark.parametrize("value, text", [(-24.6521, "-24.6521"), (-1.5e-10, "-1.5e-10"), (-3, "-3"),
                                         ("-24.6521", "-24.6521"), ("+1.5E+3", "+1.5E+3"),
                                         (True, "true"), (None, ""), ("Vellmar Ridge", "Vellmar Ridge")])
def test_numbers_and_plain_text_are_unchanged(value, text):
    assert safe_cell(value) == text


def test_a_row_is_written_quoted_and_reads_back_as_text():
    buf = io.StringIO()
    csv.writer(buf).writerow(safe_row([HOSTILE, -0.5, 12]))
    cells = next(csv.reader(io.StringIO(buf.getvalue())))
    assert cells == ["'" + HOSTILE, "-0.5", "12"]


def test_contact_plan_csv_neutralises_a_hostile_station_name(client):
    body = json.loads((SAMPLES / "contact_plan_meo.json").read_text())
    body["stations"][0]["name"] = HOSTILE
    r = client.post("/v1/contact-plans.csv", json=body)
    assert r.status_code == 200, r.text
    _, table = split_blocks(r.text)
    names = {row["station"] for row in table}
    assert "'" + HOSTILE in names and HOSTILE not in names
    assert not any(row["station"].startswith(TRIGGERS) for row in table)
    # Negative figures stay bare numbers (no apostrophe) wherever they occur.
    assert all(not cell.startswith("'-") for row in table for cell in row.values())


def test_budget_csv_keeps_negative_numbers_numeric(client):
    r = client.get("/v1/budgets.csv", params={
        "latitude_deg": 0.0, "longitude_deg": 0.0, "height_m": -400.0, "reference": "TT",
        "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "series_step_s": 21600})
    assert r.status_code == 200, r.text
    fields, table = split_blocks(r.text)
    offsets = [float(row["offset_ns"]) for row in table]
    assert min(offsets) < 0  # a clock below the geoid loses against TT
    assert all(not c.startswith("'") for row in table for c in row.values())
    assert float(fields["mean_fractional_rate"]) < 0
