"""A span shorter than one orbit is flagged: the periodic term cannot be told from the mean rate.

Check value: the orbital period of a = 26,561.4 km is 2 pi sqrt(a^3/GM) = 11.967 h (two-body
closed form, GM from IERS TN36 Table 1.1), so a 6 h span is half an orbit and a 2-day span is four.
"""

from __future__ import annotations

import copy
import math

from taubudget.app.schemas import EXAMPLE_REQUEST

GM_EARTH_M3_PER_S2 = 3.986004418e14  # IERS Conventions (2010) TN36 Table 1.1


def _warnings(client, hours: float) -> list[str]:
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body.pop("end")
    body["duration_days"] = hours / 24.0
    body["orbit"]["eccentricity"] = 0.01
    return client.post("/v1/budgets", json=body).json()["warnings"]


def test_half_an_orbit_is_flagged_with_the_period(client):
    period_h = 2 * math.pi * math.sqrt((26561.4e3) ** 3 / GM_EARTH_M3_PER_S2) / 3600.0
    (text,) = [w for w in _warnings(client, 6.0) if "shorter than one orbit" in w]
    assert f"({period_h:.3g} h)" in text and "(6 h)" in text


def test_whole_orbits_are_not_flagged(client):
    assert not [w for w in _warnings(client, 48.0) if "shorter than one orbit" in w]
