"""Checks against the IERS Conventions (2010), IERS Technical Note 36, chapter 10."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from support.budgets import POINT_MASS, kepler_budget
from taubudget.physics.constants import (
    C2_M2_PER_S2,
    GM_EARTH_TCG_M3_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    L_G,
    W0_M2_PER_S2,
)
from taubudget.physics.environment import environment_for
from taubudget.physics.kepler import solve_kepler
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.rate import GravityModel, integrand_terms
from taubudget.physics.span import Span

TEN_PICOSECONDS_NS = 0.01  # tolerance the issue sets for the periodic term
ONE_PERCENT = 0.01
GPS_A_KM = 26561.4
GPS_PERIOD_S = 2 * np.pi * np.sqrt((GPS_A_KM * 1e3) ** 3 / GM_EARTH_TCG_M3_PER_S2)


def test_lg_from_w0():
    # TN36 Table 1.1: L_G = W0/c^2 = 6.969290134e-10 (W0 = 62636856.0 m^2/s^2).
    assert abs(W0_M2_PER_S2 / C2_M2_PER_S2 - L_G) < 1e-18


@pytest.mark.parametrize("e", [0.01, 0.05, 0.16])
def test_periodic_term_matches_eq_10_10(ts, e):
    # TN36 eq. 10.10: periodic offset -(2/c^2) sqrt(a GM) e sin E, up to a constant.
    duration = 5.6 * GPS_PERIOD_S  # not a whole number of orbits
    src, span, b = kepler_budget(ts, GPS_A_KM, e, duration, series_step_s=300.0)
    t = np.asarray(b["series"]["elapsed_s"])
    m = src.m0_rad + src.m_rate * t
    ecc_anom = solve_kepler(m, e)
    a_m = GPS_A_KM * 1e3
    expected_ns = -2 * np.sqrt(a_m * GM_EARTH_TCG_M3_PER_S2) * e * np.sin(ecc_anom) / C2_M2_PER_S2 * 1e9
    got = np.asarray(b["series"]["periodic_ns"])
    diff = got - expected_ns
    assert np.max(np.abs(diff - diff.mean())) < TEN_PICOSECONDS_NS
    analytic_amp = 2 * np.sqrt(a_m * GM_EARTH_TCG_M3_PER_S2) * e / C2_M2_PER_S2 * 1e9
    assert abs(b["periodic"]["amplitude_ns"] / analytic_amp - 1) < ONE_PERCENT
    assert abs(b["periodic"]["dominant_period_s"] / GPS_PERIOD_S - 1) < 1e-6


def test_eccentricity_amplitude_at_gps_altitude(ts):
    # TN36 section 10.2: ~2.29 us x e at GPS altitude; e = 0.02 gives ~46 ns.
    _, _, b = kepler_budget(ts, GPS_A_KM, 0.02, 2.3 * GPS_PERIOD_S)
    assert abs(b["eccentricity_correction"]["amplitude_ns"] - 45.8) < 0.5
    assert b["eccentricity_correction"]["residual_after_correction_ns"] < 1e-3


def test_plain_line_fit_would_overstate_the_periodic_maximum(ts):
    # The secular rate must not absorb periodic terms: a plain least-squares line over
    # 5.6 orbits of an e = 0.158 orbit overstates the periodic maximum by several percent
    # (issue 2 quotes 6.6 % for its phase). Our joint fit stays within 1 %.
    e = 0.158
    src, span, b = kepler_budget(ts, GPS_A_KM, e, 5.6 * GPS_PERIOD_S, series_step_s=60.0, m0_deg=0.0)
    t = np.asarray(b["series"]["elapsed_s"])
    off = np.asarray(b["series"]["offset_ns"])
    naive = off - np.polyval(np.polyfit(t, off, 1), t)
    analytic_amp = 2 * np.sqrt(GPS_A_KM * 1e3 * GM_EARTH_TCG_M3_PER_S2) * e / C2_M2_PER_S2 * 1e9
    assert abs(b["periodic"]["amplitude_ns"] / analytic_amp - 1) < ONE_PERCENT
    assert np.max(np.abs(naive)) / analytic_amp - 1 > 0.03


def test_tidal_terms_near_1e15_at_gps_altitude(ts):
    # TN36 section 10.2 puts the tidal terms below ~1e-15 in frequency up to GPS altitude.
    # Over a month that includes a syzygy with the Moon near perigee the quadrupole
    # bound sum_b GM_b r^2 / d_b,min^3 / c^2 reaches 1.1e-15, so we check the RMS against
    # TN36's 1e-15 and the peak against that closed-form bound (P2 <= 1).
    start = ts.utc(2027, 3, 1)
    span = Span(start, 30 * 86400.0)
    env = environment_for(span)
    src = KeplerianOrbit(start, GPS_A_KM * 1e3, 0.01, 55.0, 10.0, 20.0, 30.0)
    t = np.linspace(0, span.duration_s, 20001)
    tidal = integrand_terms(src, "TT", t, GravityModel(0, True, True), env).terms["tidal"]
    r_max = GPS_A_KM * 1e3 * 1.01
    moon_perigee_m, sun_perihelion_m = 356_400e3, 147.09e9  # common practice (extremes)
    bound = (GM_MOON_M3_PER_S2 * r_max**2 / moon_perigee_m**3
             + GM_SUN_M3_PER_S2 * r_max**2 / sun_perihelion_m**3) / C2_M2_PER_S2 * 1.05
    assert np.sqrt(np.mean(tidal**2)) < 1e-15
    assert 1e-16 < np.max(np.abs(tidal)) < bound


@settings(max_examples=25, deadline=None)
@given(
    a_km=st.floats(7000.0, 60000.0),
    inc=st.floats(0.0, 180.0),
    m0=st.floats(0.0, 360.0),
)
def test_circular_secular_rate_property(ts, a_km, inc, m0):
    # Property: circular point-mass secular rate equals (L_G - 3GM/(2ac^2))/(1 - L_G) (TN36 eq. 10.6).
    src, span, b = kepler_budget(ts, a_km, 0.0, 0.37 * 86400.0, inc_deg=inc, m0_deg=m0)
    expected = (L_G - 1.5 * GM_EARTH_TCG_M3_PER_S2 / (a_km * 1e3 * C2_M2_PER_S2)) / (1 - L_G)
    assert np.isfinite(b["mean_fractional_rate"])
    assert abs(b["mean_fractional_rate"] - expected) < 1e-18


@settings(max_examples=25, deadline=None)
@given(
    e=st.floats(0.0, 0.75),
    a_km=st.floats(26000.0, 45000.0),
    frac_orbits=st.floats(0.3, 4.0),
)
def test_rate_finite_for_valid_elements(ts, e, a_km, frac_orbits):
    period = 2 * np.pi * np.sqrt((a_km * 1e3) ** 3 / GM_EARTH_TCG_M3_PER_S2)
    _, _, b = kepler_budget(ts, a_km, e, frac_orbits * period, gravity=GravityModel(4, True, True))
    for key in ("mean_fractional_rate", "offset_at_end_ns", "integration_error_estimate_ps"):
        assert np.isfinite(b[key])
    assert b["integration_error_estimate_ps_per_day"] < 1.0


def test_point_mass_fixture_is_point_mass():
    assert POINT_MASS.earth_zonal_degree == 0 and not POINT_MASS.bodies()
