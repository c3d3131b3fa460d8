"""A ground clock given by its orthometric height H and the geoid undulation N (no ellipsoidal height).

Check value: near the geoid, raising a clock by dH raises its rate by g dH / c^2 (the first-order
gravitational blueshift; g = 9.80620 m/s^2 at 45 deg latitude from the GRS80 normal gravity
formula, Moritz 2000, Geodetic Reference System 1980, J. Geodesy 74). The free-air gradient
(-3.09e-6 s^-2) changes g by 0.03 % over 1000 m, inside the tolerance.
"""

from __future__ import annotations

import pytest

C_M_PER_S = 299_792_458.0  # SI definition
G_45_M_PER_S2 = 9.80620  # GRS80 normal gravity at 45 deg, on the ellipsoid


def _ground(**heights) -> dict:
    return {"orbit": {"type": "surface", "latitude_deg": 45.0, "longitude_deg": 10.0, **heights},
            "reference": "TT", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0}


def test_orthometric_height_with_undulation_places_the_clock(client):
    low = client.post("/v1/budgets", json=_ground(orthometric_height_m=0.0, geoid_undulation_m=40.0))
    high = client.post("/v1/budgets", json=_ground(orthometric_height_m=1000.0, geoid_undulation_m=40.0))
    assert low.status_code == 200 and high.status_code == 200, (low.text, high.text)
    gained = high.json()["mean_fractional_rate"] - low.json()["mean_fractional_rate"]
    assert gained == pytest.approx(G_45_M_PER_S2 * 1000.0 / C_M_PER_S**2, rel=1e-3)


def test_orthometric_height_alone_names_what_is_missing(client, problem_of):
    body = problem_of(client.post("/v1/budgets", json=_ground(orthometric_height_m=1000.0)), 422)
    assert body["errors"][0]["pointer"] == "/orbit/orthometric_height_m"
    assert "geoid undulation" in body["detail"] and "h = H + N" in body["detail"]
    # it no longer reports a value the user never sent
    assert "outside the Earth's range" not in body["detail"]


def test_explicit_heights_that_disagree_are_still_refused(client, problem_of):
    req = _ground(height_m=100.0, orthometric_height_m=50.0, geoid_undulation_m=20.0)
    body = problem_of(client.post("/v1/budgets", json=req), 422)
    assert body["errors"][0]["pointer"] == "/orbit/orthometric_height_m" and "contradicts" in body["detail"]


GRS80_U0_M2_PER_S2 = 62_636_860.850  # Moritz 2000, GRS80 derived constants
TN36_W0_M2_PER_S2 = 62_636_856.0  # IERS Conventions (2010) TN36 Table 1.1 (L_G = W0/c^2)


def test_the_geoid_convention_is_stated_with_its_size(client):
    """A clock on the model geoid (H = 0) runs -(U0 - W0)/c^2 = -5.4e-17 from TT: the budget says so."""
    out = client.post("/v1/budgets", json=_ground(orthometric_height_m=0.0, geoid_undulation_m=40.0)).json()
    size = (GRS80_U0_M2_PER_S2 - TN36_W0_M2_PER_S2) / C_M_PER_S**2
    terms = {t["term"]: t for t in out["omitted_terms"]}
    assert terms["geoid_potential_convention"]["size_fractional"] == pytest.approx(size, rel=1e-9)
    # the rate itself: near -size (the residual departure is the normal field's truncation and
    # Bruns' first-order gamma N, ~1e-17)
    assert out["mean_fractional_rate"] == pytest.approx(-size, abs=1.5e-17)
