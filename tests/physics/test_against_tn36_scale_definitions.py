"""Reference scales are conventional: gravity switches act on the clock only (issue 10, section 3).

TN36 ch. 10: TT is defined through L_G (eq. 10.2) and, far from the Earth, through the geocentre's
motion in the full solar-system potential (eq. 10.4); TDB and TCB through L_B (eq. 10.1); none of
them depends on which bodies a user lets act on a clock. Closed form named beside each check:
switching the Sun off removes exactly the clock's own solar term, -GM_sun/(r c^2) per TT second.
"""

from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import AU_M
from taubudget.physics.orbits.barycentric import BodySurfaceClock, CentredKeplerianOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

DAY_S = 86400.0
ALL_ON = GravityModel(earth_zonal_degree=0, sun=True, moon=True)
SUN_OFF = GravityModel(earth_zonal_degree=0, sun=False, moon=True)
MOON_OFF = GravityModel(earth_zonal_degree=0, sun=True, moon=False)


def _budget(ts, source, reference, gravity, days=20.0):
    span = Span(ts.utc(2030, 4, 1), days * DAY_S)
    return compute_budget(BudgetInputs(source, reference, span, gravity))


def _probe(ts):
    # A circular heliocentric probe at 1 au (invented), well away from the Earth.
    return CentredKeplerianOrbit("sun", ts.utc(2030, 4, 1), AU_M, 0.0, 1.5, 40.0, 0.0, 200.0,
                                 reference_plane="ecliptic_j2000")


def test_sun_switch_does_not_change_tt(ts):
    on = _budget(ts, _probe(ts), "TT", ALL_ON)
    off = _budget(ts, _probe(ts), "TT", SUN_OFF)
    # Reference-only quantities: TT's rate against TCB along the geocentre and the reference term.
    assert off.terms_fractional["time_scale"] == on.terms_fractional["time_scale"]
    assert off.terms_fractional["reference"] == on.terms_fractional["reference"]
    # The clock loses its own solar term and nothing else: GM_sun/(AU c^2) = 9.87e-9 (closed form).
    assert abs((off.mean_fractional_rate - on.mean_fractional_rate)
               + on.terms_fractional["sun"]) < 1e-15
    assert off.mean_fractional_rate - on.mean_fractional_rate > 9e-9


def test_moon_switch_does_not_change_the_lunar_reference(ts):
    beacon = BodySurfaceClock("moon", 0.0, 54.7356, 0.0)
    on = _budget(ts, beacon, "lunar_surface", ALL_ON)
    off = _budget(ts, beacon, "lunar_surface", MOON_OFF)
    assert off.terms_fractional["reference"] == on.terms_fractional["reference"]
    assert off.terms_fractional["time_scale"] == on.terms_fractional["time_scale"]
