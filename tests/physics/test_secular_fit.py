"""The secular fit and the preset: closed forms and exact rational arithmetic (regressions of
issue 10, items 4 and 5).

- The preset f_set/f0 - 1 = -y/(1 + y) (IS-GPS-200 practice f_set = f0/(1 + y)) is checked against
  exact rational arithmetic (``fractions.Fraction``) for |y| from 1e-18 to 1e-8; the old
  1/(1 + y) - 1 lost every digit at 1e-18.
- A span of a whole number of orbits must not make the fit's top harmonic vanish: the rate is
  continuous in the span length (k T and k T +/- 1 ms agree within 1 ps/day) and the dominant
  period is the orbital period of an eccentric orbit (the -(2/c^2) r.v term; TN36 eq. 10.10).
"""

from fractions import Fraction

import numpy as np
import pytest
from taubudget.physics.budget import BudgetInputs, compute_budget, preset_fractional
from taubudget.physics.orbits import KeplerianOrbit, SurfaceClock
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

ONE_PS_PER_DAY = 1e-12 / 86400.0
"""1 ps/day as a fractional rate: the issue's continuity bound."""

FEW_ULPS = 4 * np.finfo(float).eps
"""-y/(1 + y) is one division and one rounding of 1 + y: a few units in the last place."""


def _exact_preset(y: float) -> Fraction:
    fy = Fraction(y)  # the double exactly
    return -fy / (1 + fy)


@pytest.mark.parametrize("y", [s * 10.0**p * m for p in range(-18, -7) for m in (1.0, 5.1102)
                               for s in (1, -1)])
def test_preset_keeps_every_digit_against_exact_rationals(y):
    got = preset_fractional(y)
    rel = abs(Fraction(got) - _exact_preset(y)) / abs(_exact_preset(y))
    assert rel < FEW_ULPS, (y, got, float(rel))


def test_budget_preset_of_a_mountain_clock_is_exact_to_the_ulp(ts):
    """The issue's case: a clock at +5.11e-13 got a preset of -5.1092e-13 (2e-4 relative error)."""
    start = ts.utc(2027, 1, 1)
    clock = SurfaceClock(46.61, 10.27, 1200.0, 48.0, None)
    b = compute_budget(BudgetInputs(clock, "TT", Span(start, 86400.0)))
    y = b.mean_fractional_rate
    assert 1e-13 < y < 1e-12
    rel = abs(Fraction(b.preset.fractional) - _exact_preset(y)) / abs(_exact_preset(y))
    assert rel < FEW_ULPS


GPS_LIKE_A_M = 26_561.4e3


@pytest.fixture(scope="module")
def meo(ts):
    start = ts.utc(2027, 3, 1)
    return start, KeplerianOrbit(start, GPS_LIKE_A_M, 0.01, 55.0, 30.0, 40.0, 10.0)


def _budget(meo, span_s):
    start, src = meo
    return compute_budget(BudgetInputs(src, "TT", Span(start, span_s), GravityModel(4, True, True)))


@pytest.mark.parametrize("k", [1, 2, 3])
def test_rate_is_continuous_across_whole_orbit_spans(meo, k):
    period = meo[1].period_s()
    rates = [_budget(meo, k * period + d).mean_fractional_rate for d in (-1e-3, 0.0, 1e-3)]
    assert max(rates) - min(rates) < ONE_PS_PER_DAY, np.array(rates) / ONE_PS_PER_DAY


@pytest.mark.parametrize("k", [1, 2, 3])
def test_dominant_period_of_an_eccentric_orbit_is_the_orbit(meo, k):
    """e = 0.01 at GPS altitude: the eccentricity term (23 ns, TN36 section 10.2: ~2.29 us x e)
    dominates J2's 6 h term, so the largest component has the orbital period."""
    period = meo[1].period_s()
    for d in (-1e-3, 0.0, 1e-3):
        b = _budget(meo, k * period + d)
        assert b.periodic.dominant_period_s == pytest.approx(period, rel=1e-9), d
        assert b.periodic.amplitude_s == pytest.approx(2.29e-6 * 0.01, rel=0.05)


def test_rate_is_continuous_at_the_harmonic_ramp(meo):
    """Spans below one orbit phase the harmonics in: no step anywhere, e.g. at half and one orbit."""
    period = meo[1].period_s()
    for s in (0.5 * period, period):
        r = [_budget(meo, s + d).mean_fractional_rate for d in (-1e-3, 1e-3)]
        assert abs(r[1] - r[0]) < ONE_PS_PER_DAY, s
