"""The lunar reference and clocks near the Moon and Mars (issue 10, section 6).

The ``lunar_surface`` reference is an ideal clock on the Moon's mean equatorial sphere: the Moon's
centre's motion and external potential, the rotation speed and GM_M/R_M (physics/rate_bcrs.py). A
clock on that sphere's equator differs from it only by the coordinate position term (bounded,
removed before the fit) and the Earth's tide, GM_E R^2 P2(cos theta)/(r^3 c^2), whose mean vanishes
where P2 does: theta = arccos(1/sqrt(3)) = 54.7356 deg from the sub-Earth point (closed form).
"""

import math

import pytest
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import C2_M2_PER_S2, GM_PLANET_SYSTEMS_M3_PER_S2, MARS_MEAN_RADIUS_M
from taubudget.physics.orbits.barycentric import BodySurfaceClock, CentredKeplerianOrbit
from taubudget.physics.span import Span

ONE_E_16 = 1e-16  # issue 10, section 6: lunar reference consistency
DAY_S = 86400.0
P2_NODE_DEG = math.degrees(math.acos(1.0 / math.sqrt(3.0)))


def _budget(ts, source, reference, days):
    span = Span(ts.utc(2028, 1, 1), days * DAY_S)
    return compute_budget(BudgetInputs(source, reference, span))


@pytest.mark.parametrize("days", [30.0, 110.0])
def test_clock_at_the_reference_definition_reads_zero(ts, days):
    # Today: 0.94 ns/day over 30 days, -1.2e-15 over 110 days.
    clock = BodySurfaceClock("moon", 0.0, P2_NODE_DEG, 0.0)
    assert abs(_budget(ts, clock, "lunar_surface", days).mean_fractional_rate) < ONE_E_16


def test_tt_minus_lunar_reference_is_the_same_for_every_clock(ts):
    # (X vs TT) - (X vs lunar_surface) is the reference's own rate (times 1 + y): it cannot depend
    # on X. Today 56.0254 vs 56.0231 us/day for a beacon and an orbiter.
    beacon = BodySurfaceClock("moon", -12.5, 23.4, -1500.0)
    orbiter = CentredKeplerianOrbit("moon", ts.utc(2028, 1, 1), 6540e3, 0.6, 57.0, 20.0, 90.0, 0.0)
    diffs = []
    for clock in (beacon, orbiter):
        tt = _budget(ts, clock, "TT", 30.0).mean_fractional_rate
        ls = _budget(ts, clock, "lunar_surface", 30.0).mean_fractional_rate
        diffs.append((tt - ls) / (1.0 + ls))  # (1 + tt)/(1 + ls) - 1 without the 1 + y rounding
    assert abs(diffs[0] - diffs[1]) < ONE_E_16


def test_mars_clock_has_its_own_central_body_term(ts):
    # GM_Mars/(R c^2) for a clock on the mean sphere (DE421 system GM, TN36 Table 3.1; closed form),
    # per TT second; the other planets stay in "planets" (~1e-10 from Jupiter at most).
    clock = BodySurfaceClock("mars", 18.4, 226.0, 0.0)
    terms = _budget(ts, clock, "TDB", 10.0).terms_fractional
    expected = -GM_PLANET_SYSTEMS_M3_PER_S2["mars"] / (MARS_MEAN_RADIUS_M * C2_M2_PER_S2)
    assert abs(terms["mars"] - expected) < 1e-3 * abs(expected)
    assert abs(terms["planets"]) < 0.1 * abs(expected)
