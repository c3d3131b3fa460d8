"""Ground clocks against the GRS80 normal field (Moritz, Geodetic Reference System 1980)."""

import numpy as np
import pytest
from taubudget.physics.constants import C2_M2_PER_S2, GRS80_PUBLISHED_J, GRS80_U0_M2_PER_S2, W0_M2_PER_S2
from taubudget.physics.environment import environment_for
from taubudget.physics.orbits import SurfaceClock
from taubudget.physics.potential.normal import grs80_zonals, normal_potential
from taubudget.physics.rate import GravityModel, integrand_terms
from taubudget.physics.span import Span

TWO_E_MINUS_16 = 2e-16  # issue 2: equator and 60 deg clocks agree within 2e-16
ONE_PERCENT = 0.01
NO_TIDES = GravityModel(4, False, False)


def _rate(ts, clock, reference="TT", gravity=NO_TIDES):
    span = Span(ts.utc(2027, 3, 1), 86400.0)
    env = environment_for(span)
    t = np.linspace(0.0, 86400.0, 9)
    return integrand_terms(clock, reference, t, gravity, env).total


@pytest.mark.parametrize("n", [4, 6, 8])
def test_closed_form_zonals_match_published(n):
    # GRS80 derived constants: J4 = -0.00000237091222, J6 = 0.00000000608347, J8 = -1.427e-11.
    got = grs80_zonals()[n]
    digits = {4: 1e-8, 6: 1e-6, 8: 5e-4}[n]  # J4 has 9, J6 6, J8 4 published digits
    assert abs(got / GRS80_PUBLISHED_J[n] - 1) < digits


@pytest.mark.parametrize("lat", [0.0, 17.0, 45.0, 60.0, 89.0])
def test_normal_potential_on_ellipsoid_is_u0(lat):
    # GRS80: U = U0 = 62636860.850 m^2/s^2 everywhere on the ellipsoid.
    r = SurfaceClock(lat, 33.0, 0.0).r_itrs_m
    assert abs(normal_potential(r)[0] - GRS80_U0_M2_PER_S2) < 0.002  # 2e-20 in rate


def test_equator_and_60_degrees_agree_and_match_w0_minus_u0(ts):
    eq = _rate(ts, SurfaceClock(0.0, 10.0, 0.0))
    sixty = _rate(ts, SurfaceClock(60.0, -70.0, 0.0))
    assert np.max(np.abs(eq - sixty)) < TWO_E_MINUS_16
    expected = (W0_M2_PER_S2 - GRS80_U0_M2_PER_S2) / C2_M2_PER_S2  # -5.4e-17
    assert np.max(np.abs(eq - expected)) < 1e-18
    assert np.max(np.abs(sixty - expected)) < 1e-18


def test_1000_m_higher_gains_1_09e_13(ts):
    # g/c^2 = 1.09e-16 per metre (common practice): 1000 m gives ~1.09e-13.
    low = _rate(ts, SurfaceClock(40.0, 5.0, 0.0))
    high = _rate(ts, SurfaceClock(40.0, 5.0, 1000.0))
    assert abs(np.mean(high - low) / 1.09e-13 - 1) < ONE_PERCENT


def test_clock_on_the_geoid_runs_at_w0_minus_u0_whatever_the_undulation(ts):
    # Bruns: W = U_normal(h) + gamma N; on the geoid (h = N) W = U0 to first order.
    expected = (W0_M2_PER_S2 - GRS80_U0_M2_PER_S2) / C2_M2_PER_S2
    for n in (-60.0, 45.0):
        clock = SurfaceClock(20.0, 100.0, n, geoid_undulation_m=n)
        assert np.max(np.abs(_rate(ts, clock) - expected)) < 2e-18


def test_ground_reference_cancels_identical_clock(ts):
    a = SurfaceClock(35.0, 139.0, 40.0)
    b = SurfaceClock(35.0, 139.0, 40.0)
    assert np.max(np.abs(_rate(ts, a, reference=b, gravity=GravityModel(4, True, True)))) < 1e-24
