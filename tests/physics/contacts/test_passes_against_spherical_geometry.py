"""Pass geometry against closed-form spherical geometry: circular equatorial orbit, equatorial station.

For a satellite on a circle of radius r in the equatorial plane and a station on
the equator at radius R (WGS-84 latitude 0, height 0: the geodetic and
geocentric verticals coincide), the elevation at central angle theta obeys
tan(el) = (cos(theta) - R/r) / sin(theta) (plane triangle geocentre-station-
satellite), so the mask el_m is crossed at theta_m = arccos(R cos(el_m) / r) - el_m,
the pass lasts 2 theta_m / |w_rel| and culminates at 90 deg (standard satellite
visibility geometry, e.g. Vallado, Fundamentals of Astrodynamics, 4th ed., section 11.3).
"""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from taubudget.physics.constants import GM_EARTH_TCG_M3_PER_S2, WGS84_A_M
from taubudget.physics.contacts import GroundStation, find_passes
from taubudget.physics.environment import environment_for
from taubudget.physics.frames import ERA_RATE_RAD_PER_S
from taubudget.physics.orbits import OrbitSource, States
from taubudget.physics.span import Span

TEN_MILLISECONDS_S = 0.01
"""Pass duration tolerance: two roots refined to 1 ms each, plus the orientation round trip (~1e-13 rad)."""

CENTI_DEGREE = 0.01
"""Culmination tolerance: a zenith pass has a cusp, so a 1 ms culmination time error costs
~ w_rel r/(r - R) x 1 ms ~ 1e-5 rad."""


class EquatorialCircle(OrbitSource):
    """Test source: a circle in the Earth's true equator, at rate w_rel relative to the rotating Earth.

    Defined in the ITRS and rotated to the GCRS with the span's own orientation, so the
    relative motion is exactly w_rel and the closed form applies exactly.
    """

    kind = "test"

    def __init__(self, radius_m, w_rel_rad_per_s, phase0_rad):
        self.radius_m, self.w_rel, self.phase0 = radius_m, w_rel_rad_per_s, phase0_rad

    def period_s(self):
        return 2.0 * math.pi / abs(self.w_rel + ERA_RATE_RAD_PER_S)

    def states(self, span, t_s, orientation):
        t_s = np.asarray(t_s, dtype=float)
        phi = self.phase0 + self.w_rel * t_s
        r_itrs = self.radius_m * np.stack([np.cos(phi), np.sin(phi), np.zeros_like(phi)], axis=1)
        r, v = orientation.itrs_to_gcrs(r_itrs, t_s)
        return States(r, v, np.zeros(len(t_s), dtype=np.int8))


def closed_form_duration_s(r_m, station_r_m, mask_deg, w_rel):
    el = math.radians(mask_deg)
    theta_m = math.acos(station_r_m * math.cos(el) / r_m) - el
    return 2.0 * theta_m / abs(w_rel)


@settings(max_examples=12, deadline=None)
@given(
    altitude_km=st.floats(400.0, 20_000.0),  # relative period <= 1 day: whole passes in 3 days
    mask_deg=st.floats(0.0, 30.0),
    station_lon_deg=st.floats(0.0, 359.0),
    phase_deg=st.floats(0.0, 360.0),
)
def test_equatorial_pass_duration_and_zenith(ts, altitude_km, mask_deg, station_lon_deg, phase_deg):
    r = WGS84_A_M + altitude_km * 1e3
    w_rel = math.sqrt(GM_EARTH_TCG_M3_PER_S2 / r**3) - ERA_RATE_RAD_PER_S  # prograde, Earth-relative
    span = Span(ts.utc(2027, 3, 1), 3 * 86400.0)
    station = GroundStation("Test Equator", 0.0, station_lon_deg, 0.0, mask_deg)
    src = EquatorialCircle(r, w_rel, math.radians(phase_deg))
    passes = find_passes(src, span, [station], environment_for(span).orientation)
    expected = closed_form_duration_s(r, WGS84_A_M, mask_deg, w_rel)
    whole = [p for p in passes if not (p.aos_at_span_start or p.los_at_span_end)]
    # Relative revolutions in the span give the number of passes, +-1 for the edges.
    revs = abs(w_rel) * span.duration_s / (2 * math.pi)
    assert revs - 1.0 <= len(passes) <= revs + 2.0  # partial passes at both edges
    assert whole, "a three-day span holds at least one whole pass at these rates"
    for p in whole:
        assert abs(p.duration_s - expected) < TEN_MILLISECONDS_S
        assert abs(p.max_elevation_deg - 90.0) < CENTI_DEGREE


def test_station_height_enters_the_closed_form(ts):
    # A station at height h on the equator: same triangle with R = a + h.
    r = WGS84_A_M + 2000e3
    w_rel = math.sqrt(GM_EARTH_TCG_M3_PER_S2 / r**3) - ERA_RATE_RAD_PER_S
    span = Span(ts.utc(2027, 3, 1), 86400.0)
    station = GroundStation("Test High Equator", 0.0, 40.0, 3000.0, 5.0)
    passes = find_passes(EquatorialCircle(r, w_rel, 0.3), span, [station])
    expected = closed_form_duration_s(r, WGS84_A_M + 3000.0, 5.0, w_rel)
    whole = [p for p in passes if not (p.aos_at_span_start or p.los_at_span_end)]
    assert len(whole) >= 5
    for p in whole:
        assert abs(p.duration_s - expected) < TEN_MILLISECONDS_S
