"""`taubudget batch FILE`: a batch or a sweep run locally with a progress bar, JSON or CSV out.

Outside truth: circular point-mass orbits against the closed-form rate (DESIGN.md; TN36 eq. 10.6).
"""

from __future__ import annotations

import json

from support.studies import POINT_MASS_BASE, altitude_sweep, closed_form_rate, csv_rows
from taubudget.app.cli import main

INTEGRATION_TARGET = 1e-17  # DESIGN.md: integration error below 1e-17 fractional


def test_a_local_sweep_as_csv_with_a_progress_bar(tmp_path, capsys):
    spec = tmp_path / "sweep.json"
    spec.write_text(json.dumps(altitude_sweep([7000.0, 26561.4])))
    assert main(["batch", str(spec), "--csv"]) == 0
    out, err = capsys.readouterr()
    assert "2/2 finished, 0 failed" in err
    rows = csv_rows(out)
    assert [r["orbit.semi_major_axis_km"] for r in rows] == ["7000.0", "26561.4"]
    for r in rows:
        rate = closed_form_rate(float(r["orbit.semi_major_axis_km"]))
        assert abs(float(r["mean_fractional_rate"]) - rate) < INTEGRATION_TARGET


def test_a_local_batch_as_json_keeps_each_items_problem(tmp_path, capsys):
    defaults = {k: v for k, v in POINT_MASS_BASE.items() if k != "orbit"}
    batch = {"defaults": defaults, "items": [
        {"id": "ok", "orbit": POINT_MASS_BASE["orbit"]},
        {"id": "inside-earth", "orbit": {**POINT_MASS_BASE["orbit"], "semi_major_axis_km": 3000.0}}]}
    path = tmp_path / "batch.json"
    path.write_text(json.dumps(batch))
    out_file = tmp_path / "out.json"
    assert main(["batch", str(path), "-o", str(out_file)]) == 0
    assert "2/2 finished, 1 failed" in capsys.readouterr().err
    out = json.loads(out_file.read_text())
    assert (out["succeeded"], out["failed"]) == (1, 1)
    ok, bad = out["items"]
    assert abs(ok["budget"]["mean_fractional_rate"] - closed_form_rate(26561.4)) < INTEGRATION_TARGET
    assert bad["status"] == 422 and bad["problem"]["errors"][0]["pointer"] == "/orbit/semi_major_axis_km"
    path.write_text(json.dumps({"items": [{"orbit": {}}]}))
    assert main(["batch", str(path)]) == 2
    assert "needs an id" in capsys.readouterr().err
