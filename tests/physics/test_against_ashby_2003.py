"""J2 periodic clock-rate term of a GPS-like orbit (Ashby 2003, Living Rev. Relativity 6:1, sec. 9).

Ashby finds that Earth's quadrupole gives the GPS clock a periodic fractional-frequency
term of amplitude about 0.695e-14 with a ~6 h period (twice the orbital frequency).
The orbit must include J2 short-period motion, so we use SGP4 from elements built
with ``sgp4init`` (near-circular, i = 55 deg).
"""

import math

import numpy as np
from sgp4.api import WGS72, Satrec
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.environment import environment_for
from taubudget.physics.orbits import KeplerianOrbit, TleOrbit
from taubudget.physics.rate import GravityModel, integrand_terms
from taubudget.physics.span import Span

FIFTEEN_PERCENT = 0.15  # issue 2 tolerance on the published amplitude


def _second_harmonic(src, epoch) -> float:
    """Amplitude of the fractional rate's twice-per-orbit term over 2 days, J2 only (line + 4 harmonics)."""
    span = Span(epoch, 2 * SECONDS_PER_DAY)
    t = np.linspace(0.0, span.duration_s, 8001)
    y = integrand_terms(src, "TT", t, GravityModel(2, False, False), environment_for(span)).total
    w = 2 * np.pi / src.period_s()
    cols = [np.ones_like(t), t] + [f(k * w * t) for k in (1, 2, 3, 4) for f in (np.cos, np.sin)]
    coef, *_ = np.linalg.lstsq(np.stack(cols, axis=1), y, rcond=None)
    return math.hypot(coef[4], coef[5])


def test_j2_periodic_rate_amplitude_and_period(ts):
    epoch = ts.utc(2027, 3, 1)
    sat = Satrec()
    a_km, mu_km3 = 26561.4, 398600.8  # WGS-72 mu, as SGP4 uses
    n_rad_min = math.sqrt(mu_km3 / a_km**3) * 60.0
    days_since_1949 = epoch.tt - 2433281.5 - 69.184 / SECONDS_PER_DAY
    sat.sgp4init(WGS72, "i", 1, days_since_1949, 0.0, 0.0, 0.0, 1e-7, 0.0,
                 math.radians(55.0), 0.0, n_rad_min, 0.0)
    src = TleOrbit.from_satrec(sat, ts)
    assert abs(_second_harmonic(src, epoch) / 0.695e-14 - 1) < FIFTEEN_PERCENT
    period_h = src.period_s() / 2 / 3600
    assert 5.8 < period_h < 6.2


def test_j2_periodic_rate_of_mean_keplerian_elements(ts):
    # The same check on a Keplerian orbit given as Brouwer mean elements: its J2 short-period
    # motion now comes from the first-order theory (issue 10): 6.99e-15 (0.6 %). A two-body
    # ellipse in the same rate sees only the potential's own J2 variation: 5.25e-15 (-25 %).
    epoch = ts.utc(2027, 3, 1)
    src = KeplerianOrbit(epoch, 26561.4e3, 0.0, 55.0, 0.0, 0.0, 0.0, element_type="mean", zonal_degree=2)
    assert abs(_second_harmonic(src, epoch) / 0.695e-14 - 1) < FIFTEEN_PERCENT
