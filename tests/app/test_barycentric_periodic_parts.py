"""A lunar orbiter's periodic figures describe the clock's own periodic part; the coordinate position
term is reported on its own.

Check values (closed forms): the eccentricity term -(2/c^2) r.v = -A sin E with A = 2 sqrt(GM a) e / c^2
(TN36 eq. 10.10), and sin E = sum_n 2 J_n(n e) / (n e) sin(n M) (the Kapteyn / Bessel series of
Kepler's equation), so its n-th orbital harmonic has amplitude A 2 J_n(n e) / (n e). Bessel
functions from scipy.special. The sample is sample_orbits/lunar_orbiter.json (e = 0.6, against
the lunar reference). Before, the components and the residual after the correction carried the
~1.8 us position term (1726.9 ns at the orbital period; 1827.5 ns left "after correction") while
periodic.amplitude_ns did not.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from scipy.special import jv

SAMPLE = Path(__file__).resolve().parents[2] / "sample_orbits" / "lunar_orbiter.json"


def test_lunar_orbiter_components_and_residual_are_the_clocks_own(client):
    req = json.loads(SAMPLE.read_text())
    out = client.post("/v1/budgets", json=req).json()
    ecc, per = out["eccentricity_correction"], out["periodic"]
    e = req["orbit"]["eccentricity"]
    a_ns = ecc["analytic_amplitude_ns"]
    for n, comp in enumerate(per["components"], start=1):
        assert comp["amplitude_ns"] == pytest.approx(a_ns * 2 * jv(n, n * e) / (n * e), rel=5e-3), n
    # the correction removes the clock's own periodic part; what is left is small
    assert ecc["residual_after_correction_ns"] < 0.01 * per["amplitude_ns"]
    # the position term is still there, reported on its own and in the "with" figures
    pos = out["position_term"]["amplitude_ns"]
    assert pos > 10 * per["amplitude_ns"]
    assert ecc["residual_after_correction_with_position_term_ns"] == pytest.approx(pos, rel=0.05)


def test_an_earth_orbit_has_no_position_figure(client, request_body):
    out = client.post("/v1/budgets", json=request_body).json()
    assert "residual_after_correction_with_position_term_ns" not in out["eccentricity_correction"]
