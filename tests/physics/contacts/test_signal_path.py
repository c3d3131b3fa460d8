"""One-way frequency shift of the downlink against its definition and outside references.

- Definition: f_R/f_E = dtau_E/dtau_R along the signal, so the kinematic factor dt_E/dt_R
  must equal the numerical derivative of our own light-time solution (a different route:
  finite differences of the emission times, no n.v formula).
- skyfield's topocentric range rate (``frame_latlon_and_rates``) for the first-order Doppler.
- Kouba 2004 (GPS Solutions 8(3):170-180): a clock on a circular orbit of a = 26,561.4 km
  in a point-mass field gains 38,575.008 ns/day on TT; a station clock on the ellipsoid at
  zero height with N = 0 (the GRS80 normal field) keeps TT's rate to ~1e-16 (U0 - W0 =
  4.85 m^2/s^2, TN36 Table 1.1 and GRS80), so the Doppler-free part of the shift is Kouba's.
"""

from __future__ import annotations

import numpy as np
import pytest
from skyfield.api import EarthSatellite, wgs84
from support.budgets import LEO_TLE
from taubudget.physics.constants import C_M_PER_S, L_G, SECONDS_PER_DAY
from taubudget.physics.contacts import GroundStation, downlink, find_passes
from taubudget.physics.environment import environment_for
from taubudget.physics.orbits import KeplerianOrbit, TleOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

KOUBA_NS_PER_DAY = 38_575.008  # Kouba 2004, circular GPS orbit against TT

STATION_RATE_TOLERANCE = 2e-16
"""GRS80 U0 - W0 = 4.85 m^2/s^2 is 5.4e-17; mixed GM conventions of station and orbit ~1e-16."""

DERIVATIVE_TOLERANCE = 1e-12
"""Central differences of light time over +-0.1 s: truncation h^2/6 x d^3(lt)/dt^3 ~ 3e-13 for LEO.
A Keplerian source is used: SGP4's velocity departs from the derivative of its own position
by ~1e-2 m/s (3e-11 in Doppler), an SGP4 property rather than ours."""

FLOAT_ONE_PLUS_X = 5e-16
"""Rounding of a few products of (1 + x) in double precision (eps = 2.2e-16)."""

RETARDATION_M_PER_S = 0.2
"""Ours uses the emission-time satellite state, skyfield's the instantaneous one: the satellite's
line-of-sight acceleration (< 10 m/s^2) times the light time (< 10 ms)."""


@pytest.fixture(scope="module")
def leo(ts):
    span = Span(ts.utc(2027, 3, 1), 86400.0)
    src = TleOrbit(*LEO_TLE, ts)
    sta = GroundStation("Test Plain", 40.0, -3.0, 650.0, 5.0)
    env = environment_for(span)
    return span, src, sta, env, find_passes(src, span, [sta], env.orientation)


def test_doppler_factor_equals_derivative_of_light_time(leo):
    span, _, sta, env, _ = leo
    src = KeplerianOrbit(span.start, 7_200e3, 0.001, 97.6, 211.0, 96.0, 15.0)
    passes = find_passes(src, span, [sta], env.orientation)
    assert len(passes) >= 3
    for p in passes[:4]:
        t = np.linspace(p.aos_s + 10.0, p.los_s - 10.0, 5)
        h = 0.1
        mid = downlink(src, sta, span, t, env)
        plus, minus = downlink(src, sta, span, t + h, env), downlink(src, sta, span, t - h, env)
        # t_E = t_R - lt (TT seconds): dt_E/dt_R - 1 = -d(lt_TT)/dt_R.
        d_lt = (plus.light_time_s - minus.light_time_s) * (1.0 - L_G) / (2 * h)
        np.testing.assert_allclose(mid.doppler_factor_m1, -d_lt, atol=DERIVATIVE_TOLERANCE, rtol=0)
        assert np.max(np.abs(mid.doppler_factor_m1)) > 1e-6  # a LEO pass has ~1e-5 Doppler
        total = (1 + mid.proper_rate_ratio_m1) * (1 + mid.doppler_factor_m1) - 1
        # Rebuilt through (1 + x) products, which round at 1.1e-16 each.
        np.testing.assert_allclose(mid.fractional_frequency_shift, total, atol=FLOAT_ONE_PLUS_X, rtol=0)


def test_range_rate_matches_skyfield(ts, leo):
    span, src, sta, env, passes = leo
    sat = EarthSatellite(*LEO_TLE, "test", ts)
    topos = wgs84.latlon(sta.latitude_deg, sta.longitude_deg, elevation_m=sta.height_m)
    for p in passes[:4]:
        t = np.linspace(p.aos_s, p.los_s, 6)
        ours = downlink(src, sta, span, t, env)
        *_, range_rate = (sat - topos).at(span.times(t)).frame_latlon_and_rates(topos)
        np.testing.assert_allclose(ours.range_rate_m_per_s, range_rate.km_per_s * 1e3,
                                   atol=RETARDATION_M_PER_S, rtol=0)
        np.testing.assert_allclose(ours.first_order_doppler_shift, -ours.range_rate_m_per_s / C_M_PER_S,
                                   rtol=1e-12)


def test_doppler_free_shift_is_kouba_rate(ts):
    span = Span(ts.utc(2027, 3, 1), 86400.0)
    src = KeplerianOrbit(span.start, 26_561.4e3, 0.0, 55.0, 30.0, 40.0, 10.0)
    sta = GroundStation("Test Datum", 20.0, 60.0, 0.0, 5.0, geoid_undulation_m=0.0)
    env = environment_for(span)
    passes = find_passes(src, span, [sta], env.orientation)
    t = np.concatenate([[p.aos_s, p.culmination_s, p.los_s] for p in passes])
    path = downlink(src, sta, span, t, env, GravityModel(earth_zonal_degree=0, sun=False, moon=False))
    kouba = KOUBA_NS_PER_DAY * 1e-9 / SECONDS_PER_DAY
    np.testing.assert_allclose(path.proper_rate_ratio_m1, kouba, atol=STATION_RATE_TOLERANCE, rtol=0)
    # The gravitational part is the larger and positive (a signal falling into the well is blueshifted).
    assert np.all(path.gravitational_shift > 5e-10) and np.all(path.time_dilation_shift < 0)
