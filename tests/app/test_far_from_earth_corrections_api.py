"""Corrections, labels and sources for clocks far from the Earth (issue 10, sections 6 and 7)."""

import json
from pathlib import Path

import pytest

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"


def _sample(name, **changes):
    body = json.loads((SAMPLES / name).read_text())
    body.pop("series_step_s", None)
    body.update(changes)
    return body


def test_lunar_beacon_is_not_offered_an_earth_based_correction(client):
    # A clock fixed on the Moon has no orbit of its own around a central body: IS-GPS-200's
    # -(2/c^2) r.v user correction does not apply. Today the Moon's r.v around the Earth is used and
    # the "after correction" residual (131,901 ns) exceeds what it corrects.
    b = client.post("/v1/budgets", json=_sample("lunar_beacon.json", duration_days=30)).json()
    ecc = b["eccentricity_correction"]
    assert ecc["applicable"] is False and ecc["amplitude_ns"] == 0.0
    # Nothing is corrected: what is left is the clock's own periodic part itself (the coordinate
    # position term is reported apart, and kept in the "with position term" figure).
    assert ecc["residual_peak_to_peak_ns"] == pytest.approx(b["periodic"]["peak_to_peak_ns"], rel=1e-9)
    assert ecc["residual_after_correction_with_position_term_ns"] > 100 * ecc["residual_after_correction_ns"]


def test_apply_eccentricity_correction_false_is_honoured(client):
    # A lunar orbiter (its own centre: the Moon). With the switch off, what is left after the user
    # segment is the periodic part itself.
    on = client.post("/v1/budgets", json=_sample("lunar_orbiter.json", reference="TT")).json()
    off = client.post("/v1/budgets", json=_sample("lunar_orbiter.json", reference="TT",
                                                  apply_eccentricity_correction=False)).json()
    assert on["eccentricity_correction"]["applied"] is True
    assert off["eccentricity_correction"]["applied"] is False
    assert off["eccentricity_correction"]["residual_peak_to_peak_ns"] == pytest.approx(
        off["periodic"]["peak_to_peak_ns"], rel=1e-9)
    assert (on["eccentricity_correction"]["residual_peak_to_peak_ns"]
            < off["eccentricity_correction"]["residual_peak_to_peak_ns"] - 100.0)


def test_position_term_is_reported_apart_from_the_clocks_periodic_part(client):
    # Near the Moon the coordinate position term v_E.(x - x_E)/c^2 (TN36 eq. 10.4) swings ~130 us a
    # month; the clock's own periodic part (the Moon's eccentricity, ~0.5 us) must not hide in it.
    b = client.post("/v1/budgets", json=_sample("lunar_beacon.json", duration_days=30)).json()
    p = b["periodic"]
    assert 100e3 < p["position_term_amplitude_ns"] < 160e3
    assert p["amplitude_ns"] < 5e3
    assert p["amplitude_with_position_term_ns"] > 100e3


def test_model_block_describes_the_barycentric_model(client):
    b = client.post("/v1/budgets", json=_sample("lunar_beacon.json", duration_days=10)).json()
    text = json.dumps(b["model"])
    assert "EGM2008" not in text
    assert b["model"]["earth_field"].startswith("point mass")
    assert "GRS80" not in b["model"]["earth_field"]


def test_no_value_from_memory_reaches_a_user(client, request_body):
    # TN36 Table 3.1 (DE421 mass parameters) and the EGM2008 coefficient file (Pavlis et al. 2012)
    # are cited instead.
    assert "from memory" not in client.get("/v1/reference").text
    request_body["gravity"] = {"earth_zonal_degree": 2, "sun": False, "moon": False}
    assert "from memory" not in client.post("/v1/budgets", json=request_body).text


def test_cli_table_labels_a_lunar_beacon_without_a_correction():
    # Review: the table printed "after user correction" for a clock where no correction is offered,
    # and said the position term was in the periodic part that the JSON leaves it out of.
    import subprocess
    import sys
    from pathlib import Path

    sample = Path(__file__).resolve().parents[2] / "sample_orbits" / "lunar_beacon.json"
    out = subprocess.run([sys.executable, "-m", "taubudget.app.cli", "budget", str(sample)],
                         capture_output=True, text=True, check=True).stdout
    out = " ".join(out.split())  # prose is wrapped to the terminal width: compare the words
    assert "not offered for this clock" in out
    assert "after user correction" not in out and "after preset only" in out
    assert "not in the periodic amplitude" in out
