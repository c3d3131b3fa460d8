"""Kepler solver and two-body states against closed forms; J2 secular drift against SGP4."""

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from sgp4.api import WGS72, Satrec
from taubudget.physics.constants import GM_EARTH_TCG_M3_PER_S2, SECONDS_PER_DAY
from taubudget.physics.kepler import elements_to_state, solve_kepler

KEPLER_TOLERANCE_RAD = 1e-15  # issue 2: solver good to 1e-15 rad
ULP_MARGIN = 4  # the residual E - e sin E - M is itself rounded at |E| ~ pi


@settings(max_examples=60, deadline=None)
@given(e=st.floats(0.0, 0.99), m=st.floats(-math.pi, math.pi))
def test_kepler_residual_below_1e15(e, m):
    ecc = solve_kepler(np.array([m]), e)[0]
    residual = ecc - e * math.sin(ecc) - m
    assert abs(residual) <= KEPLER_TOLERANCE_RAD + ULP_MARGIN * np.spacing(math.pi)


def test_kepler_vectorised_many_revolutions():
    m = np.linspace(-40.0, 40.0, 200_001)
    for e in (0.0, 0.3, 0.9, 0.999):
        ecc = solve_kepler(m, e)
        assert np.max(np.abs(ecc - e * np.sin(ecc) - m)) < 1e-13  # |M| up to 40: 40 ulp of M


def test_vis_viva_and_angular_momentum():
    # Two-body invariants (any textbook, e.g. Vallado 4th ed. eqs. 1-31 and 2-4).
    gm, a, e = GM_EARTH_TCG_M3_PER_S2, 20000e3, 0.4
    m = np.linspace(0, 2 * np.pi, 101)
    r, v, _ = elements_to_state(gm, a, e, 0.7, 1.1, 2.3, m)
    rn, vn = np.linalg.norm(r, axis=1), np.linalg.norm(v, axis=1)
    assert np.allclose(vn**2, gm * (2 / rn - 1 / a), rtol=1e-13)
    h = np.linalg.norm(np.cross(r, v), axis=1)
    assert np.allclose(h, np.sqrt(gm * a * (1 - e * e)), rtol=1e-13)


def test_j2_secular_node_rate_matches_sgp4():
    # SGP4's secular nodal rate (Hoots & Roehrich 1980, Spacetrack Report 3) includes J2 at
    # first order plus J4 and higher; our first-order Brouwer rate agrees within 1 %.
    from taubudget.physics.ephemeris import timescale
    from taubudget.physics.orbits import KeplerianOrbit

    ts = timescale()
    epoch = ts.utc(2027, 3, 1)
    a_km, inc, e = 7200.0, 63.0, 0.001
    n_rad_min = math.sqrt(398600.8 / a_km**3) * 60.0
    sat = Satrec()
    sat.sgp4init(WGS72, "i", 2, epoch.tt - 2433281.5 - 69.184 / SECONDS_PER_DAY, 0.0, 0.0, 0.0,
                 e, 0.0, math.radians(inc), 0.0, n_rad_min, 0.0)
    ours = KeplerianOrbit(epoch, a_km * 1e3, e, inc, 0.0, 0.0, 0.0, j2_secular=True)
    # sgp4's secular node rate is nodedot (rad/min).
    assert abs(ours.raan_rate * 60.0 / sat.nodedot - 1) < 0.01
