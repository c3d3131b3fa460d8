"""Coarse-grid interpolation of Earth orientation and Sun/Moon positions, bounded against skyfield."""

import numpy as np
import pytest
from skyfield.api import wgs84
from skyfield.framelib import itrs
from skyfield.sgp4lib import TEME
from taubudget.physics.constants import GM_MOON_M3_PER_S2, GM_SUN_M3_PER_S2
from taubudget.physics.ephemeris import ephemeris
from taubudget.physics.frames import EarthOrientation
from taubudget.physics.potential.tidal import SunMoonPositions, tidal_potential
from taubudget.physics.span import Span

ONE_MILLIMETRE_M = 1e-3
ONE_METRE_M = 1.0




@pytest.mark.parametrize("days", [30.0, 400.0])  # 400 days: the grid is built in several blocks
def test_orientation_interpolation_error(ts, days):
    span = Span(ts.utc(2027, 3, 1), days * 86400.0)
    eo = EarthOrientation.for_span(span)
    t_s = np.random.default_rng(7).uniform(0, span.duration_s, 200)
    t = span.times(t_s)
    # A ground point: skyfield's own GCRS position vs ours.
    site = wgs84.latlon(-33.0, 151.0, 50.0)
    ours, _ = eo.itrs_to_gcrs(site.itrs_xyz.m, t_s)
    assert np.max(np.abs(ours - site.at(t).position.m.T)) < ONE_MILLIMETRE_M
    # ITRS rotation as skyfield applies it.
    r_gcrs = np.array([2.0e7, -1.0e7, 1.2e7])
    ref = np.einsum("ijn,j->ni", itrs.rotation_at(t), r_gcrs)
    assert np.max(np.abs(eo.gcrs_to_itrs(np.tile(r_gcrs, (200, 1)), t_s) - ref)) < ONE_MILLIMETRE_M
    # TEME -> GCRS: 1e-13 rad on a 26,000 km vector is 3 microns.
    x = np.array([2.0e7, 1.0e7, -5.0e6])
    ref = np.einsum("jin,j->ni", TEME.rotation_at(t), x)
    assert np.max(np.abs(eo.teme_to_gcrs(np.tile(x, (200, 1)), t_s) - ref)) < ONE_MILLIMETRE_M


def test_sun_moon_interpolation_error_and_its_effect(ts):
    span = Span(ts.utc(2027, 3, 1), 30 * 86400.0)
    sm = SunMoonPositions.for_span(span)
    t_s = np.random.default_rng(3).uniform(0, span.duration_s, 300)
    t = span.times(t_s)
    eph = ephemeris()
    earth = eph["earth"].at(t).position.m
    r = np.tile([2.6e7, 0.0, 0.0], (300, 1))
    for body, gm in (("moon", GM_MOON_M3_PER_S2), ("sun", GM_SUN_M3_PER_S2)):
        direct = (eph[body].at(t).position.m - earth).T
        interp = sm.position_m(body, t_s)
        assert np.max(np.linalg.norm(interp - direct, axis=1)) < ONE_METRE_M
        du = tidal_potential(r, interp, gm) - tidal_potential(r, direct, gm)
        assert np.max(np.abs(du)) / 8.98755e16 < 1e-22


def test_tidal_formula_against_extended_precision():
    # The cancellation-safe form against the naive formula in long double.
    rng = np.random.default_rng(11)
    r = rng.normal(size=(50, 3)) * 2.6e7
    body = rng.normal(size=(50, 3))
    body = body / np.linalg.norm(body, axis=1)[:, None] * 1.496e11
    got = tidal_potential(r, body, GM_SUN_M3_PER_S2)
    rl, bl = r.astype(np.longdouble), body.astype(np.longdouble)
    gm = np.longdouble(GM_SUN_M3_PER_S2)
    big = np.sqrt((bl * bl).sum(1))
    naive = gm * (1 / np.sqrt(((bl - rl) ** 2).sum(1)) - 1 / big - (rl * bl).sum(1) / big**3)
    if np.finfo(np.longdouble).eps < 1e-18:  # a real extended type on this platform
        assert np.max(np.abs(got - naive.astype(float)) / np.abs(naive.astype(float))) < 1e-6
    assert np.all(np.isfinite(got))
