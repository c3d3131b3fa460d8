"""Figures (matplotlib): the image routes and ``--plot`` write valid SVG/PNG whose series are the
response's numbers, with the title, reference, span, axis labels with units and the caution.

The series check reads the vertices of each plotted line back from the SVG and requires them to
be an affine image (the axes' data-to-pixel map) of the response's own arrays: a wrong, thinned
or reordered series fails it.
"""

from __future__ import annotations

import io
import json
import re
from pathlib import Path

import numpy as np
import pytest
from defusedxml import ElementTree
from matplotlib.image import imread
from support.nist_sp1065 import NBS9_Y, TABLE_30
from taubudget.app.cli import main
from taubudget.app.present.figures import PNG_DPI
from taubudget.physics.budget import CAUTION

ROOT = Path(__file__).resolve().parents[2]
SVG = "{http://www.w3.org/2000/svg}"
SAMPLED = 0.05  # a 1800 s series against the budget's fine grid
PIXEL_RESIDUAL = 0.02  # px: matplotlib writes vertices to 1e-6 px; far below one sample's spacing
QUERY = {"semi_major_axis_km": 26561.4, "eccentricity": 0.02, "inclination_deg": 55.0,
         "start": "2027-03-01T00:00:00Z", "duration_days": 1.0, "series_step_s": 1800, "reference": "GPS",
         "earth_zonal_degree": 2, "clock_preset": "space_rubidium", "time_error_budget_ns": 10.0}


def _svg(data: bytes):
    root = ElementTree.fromstring(data)
    assert root.tag == SVG + "svg"
    return root


def _texts(root) -> str:
    return " ".join("".join(t.itertext()) for t in root.iter(SVG + "text"))


def _vertices(root, gid: str) -> np.ndarray:
    (group,) = [g for g in root.iter(SVG + "g") if g.get("id") == gid]
    (path,) = group.findall(SVG + "path")  # the line itself (markers sit in <defs> and <use>)
    nums = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?(?:e-?\d+)?", path.get("d"))]
    return np.array(nums).reshape(-1, 2)


def _assert_affine(pixels: np.ndarray, values) -> None:
    """pixels = a * values + b, exactly up to the SVG's rounding."""
    values = np.asarray(values, dtype=float)
    assert pixels.shape == values.shape
    design = np.column_stack([values, np.ones_like(values)])
    coef, *_ = np.linalg.lstsq(design, pixels, rcond=None)
    assert coef[0] != 0
    assert np.max(np.abs(design @ coef - pixels)) < PIXEL_RESIDUAL


def _series_drawn(root, gid: str, x, y) -> None:
    v = _vertices(root, gid)
    _assert_affine(v[:, 0], x)
    _assert_affine(v[:, 1], y)


def test_budget_svg_route_draws_the_responses_series(client):
    body = client.post("/v1/budgets", json={
        "orbit": {"type": "keplerian", "epoch": QUERY["start"], "semi_major_axis_km": 26561.4,
                  "eccentricity": 0.02, "inclination_deg": 55.0},
        "reference": "GPS", "start": QUERY["start"], "duration_days": 1.0, "series_step_s": 1800,
        "gravity": {"earth_zonal_degree": 2}, "clock": {"preset": "space_rubidium"},
        "time_error_budget_ns": 10.0}).json()
    r = client.get("/v1/budgets.svg", params={**QUERY, "plot": "all"})
    assert r.status_code == 200 and r.headers["content-type"] == "image/svg+xml"
    assert r.headers["x-taubudget-caution"] == CAUTION
    root = _svg(r.content)
    text = _texts(root)
    for label in ("taubudget drift budget", "reference GPS", "2027-03-01T00:00:00.000000Z to "
                  "2027-03-02T00:00:00.000000Z (1.000 d)", "raw offset, ns", "after preset / correction, ns",
                  "time since 2027-03-01T00:00:00.000000Z, days", "|time error|, ns",
                  "fractional rate against the reference (dimensionless)", "Caution: Planning estimate"):
        assert label in text, label
    s = body["series"]
    days = np.asarray(s["elapsed_s"]) / 86400
    after_preset = np.asarray(s["periodic_ns"]) - s["periodic_ns"][0]
    _series_drawn(root, "series-raw-offset", days, s["offset_ns"])
    _series_drawn(root, "series-after-preset", days, after_preset)
    ecc = np.asarray(s["eccentricity_term_ns"])
    after_correction = after_preset - (ecc - ecc[0])
    _series_drawn(root, "series-after-correction", days, after_correction)
    # The two derived curves are physics' after_preset_s / after_correction_s: their spans match
    # the budget's own figures, which come from a finer grid (SAMPLED: the 30-min series can miss
    # the extremes by a little).
    assert np.ptp(after_preset) == pytest.approx(body["periodic"]["peak_to_peak_ns"], rel=SAMPLED)
    assert np.ptp(after_correction) == pytest.approx(
        body["eccentricity_correction"]["residual_peak_to_peak_ns"], rel=SAMPLED)
    _series_drawn(root, "series-periodic", days, s["periodic_ns"])
    _series_drawn(root, "series-eccentricity-term", days, s["eccentricity_term_ns"])
    ce = body["clock_error"]["series"]
    _series_drawn(root, "series-bound", np.asarray(ce["elapsed_s"]) / 86400, ce["bound_ns"])
    bars = {g.get("id") for g in root.iter(SVG + "g") if (g.get("id") or "").startswith("series-terms-")}
    assert bars == {f"series-terms-{name}" for name in body["terms_fractional"]}


def test_budget_png_route(client):
    r = client.get("/v1/budgets.png", params={**QUERY, "plot": "terms"})
    assert r.status_code == 200 and r.headers["content-type"] == "image/png"
    assert r.content[:8] == b"\x89PNG\r\n\x1a\n"
    image = imread(io.BytesIO(r.content), format="png")
    assert image.shape[0] == round((1.2 + 3.0) * PNG_DPI) and image.shape[1] == round(9.5 * PNG_DPI)
    assert image.std() > 0  # not a blank canvas


@pytest.mark.parametrize("params, parameter", [
    ({"plot": "offset", "series_step_s": None}, "series_step_s"),
    ({"plot": "envelope", "clock_preset": None, "time_error_budget_ns": None}, "clock_preset"),
    ({"plot": "sideways"}, "plot"),
    ({"field": "mean_rate_us_per_day"}, "field"),
])
def test_figure_route_problems_name_the_parameter(client, problem_of, params, parameter):
    query = {k: v for k, v in {**QUERY, **params}.items() if v is not None}
    p = problem_of(client.get("/v1/budgets.svg", params=query), 422)
    assert [e.get("parameter") or e["pointer"].lstrip("/") for e in p["errors"]] == [parameter]


def test_cli_budget_plot(tmp_path, capsys):
    request = tmp_path / "request.json"
    request.write_text(json.dumps({
        "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z", "semi_major_axis_km": 26561.4,
                  "eccentricity": 0.01, "inclination_deg": 55.0},
        "reference": "TAI", "start": "2027-03-01T00:00:00Z", "duration_days": 0.5, "series_step_s": 900}))
    out = tmp_path / "budget.svg"
    assert main(["budget", str(request), "--json", "--plot", str(out)]) == 0
    body = json.loads(capsys.readouterr().out)
    root = _svg(out.read_bytes())
    assert "reference TAI" in _texts(root)
    s = body["series"]
    _series_drawn(root, "series-raw-offset", np.asarray(s["elapsed_s"]) / 86400, s["offset_ns"])
    assert not any(g.get("id") == "series-bound" for g in root.iter(SVG + "g"))  # no clock: no envelope
    png = tmp_path / "budget.png"
    assert main(["budget", str(request), "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_cli_plot_refuses_other_formats_before_computing(tmp_path, capsys):
    with pytest.raises(SystemExit) as stop:
        main(["budget", "no-such-request.json", "--plot", str(tmp_path / "budget.pdf")])
    assert stop.value.code == 2
    assert ".svg or .png" in capsys.readouterr().err
    assert not (tmp_path / "budget.pdf").exists()


def test_cli_contacts_plot_envelope_and_syncs(tmp_path, capsys):
    plan_req = json.loads((ROOT / "sample_orbits" / "contact_plan_meo.json").read_text())
    plan_req["end"] = "2027-03-02T00:00:00Z"  # one day of the sample
    path = tmp_path / "plan.json"
    path.write_text(json.dumps(plan_req))
    out = tmp_path / "plan.svg"
    assert main(["contacts", str(path), "--json", "--plot", str(out)]) == 0
    plan = json.loads(capsys.readouterr().out)
    env = plan["envelope"]
    # The envelope carries, at each sync, the bound just before it (as the sync rows say) and just after.
    for sync in plan["syncs"]:
        at = [i for i, t in enumerate(env["time_utc"]) if t == sync["time_utc"]]
        assert len(at) == 2
        assert env["bound_ns"][at[0]] == pytest.approx(sync["bound_before_sync_ns"], rel=1e-12, abs=1e-12)
    assert max(env["bound_ns"]) <= plan["worst_error_ns"] * (1 + 1e-12)
    root = _svg(out.read_bytes())
    text = _texts(root)
    assert "taubudget contact plan" in text and "reference GPS" in text
    assert all(name["name"] in text for name in plan_req["stations"] if any(
        p["station"] == name["name"] for p in plan["passes"]))
    _series_drawn(root, "series-bound", np.asarray(env["elapsed_s"]) / 86400, env["bound_ns"])


def test_cli_stability_plot_nbs_data(tmp_path, capsys):
    data = tmp_path / "nbs.txt"
    data.write_text("# data_type: frequency\n# sample_interval_s: 1\n" + "\n".join(map(str, NBS9_Y)) + "\n")
    out = tmp_path / "stability.svg"
    assert main(["stability", str(data), "--json", "--plot", str(out)]) == 0
    r = json.loads(capsys.readouterr().out)
    rows = [d for d in r["deviations"] if d["adev"] is not None]
    (_, adev_1, _) = next(row for row in TABLE_30 if row[0] == "adev")
    assert rows[0]["tau_s"] == 1 and rows[0]["adev"] == pytest.approx(adev_1, rel=1e-6)  # SP 1065 Table 30
    root = _svg(out.read_bytes())
    assert "averaging time tau, s" in _texts(root) and "9 frequency samples" in _texts(root)
    v = _vertices(root, "series-adev")
    _assert_affine(v[:, 0], np.log10([d["tau_s"] for d in rows]))
    _assert_affine(v[:, 1], np.log10([d["adev"] for d in rows]))
