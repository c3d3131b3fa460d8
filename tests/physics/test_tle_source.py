"""TLE/SGP4 source: our fast path against skyfield's own EarthSatellite, and its error paths."""

import numpy as np
import pytest
from skyfield.api import EarthSatellite
from support.budgets import LEO_TLE, as_dict
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import TleOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

ONE_MILLIMETRE_M = 1e-3
ONE_MICRON_PER_S = 1e-6


def test_states_match_skyfield_earth_satellite(ts):
    src = TleOrbit(*LEO_TLE, ts)
    span = Span(ts.utc(2027, 3, 1, 6), 2 * 86400.0)
    env = environment_for(span)
    t_s = np.linspace(0.0, span.duration_s, 97)
    st = src.states(span, t_s, env.orientation)
    ref = EarthSatellite(*LEO_TLE, "ref", ts).at(span.times(t_s))
    assert np.max(np.abs(st.r_gcrs_m - ref.position.m.T)) < ONE_MILLIMETRE_M
    assert np.max(np.abs(st.v_gcrs_m_per_s - ref.velocity.m_per_s.T)) < ONE_MICRON_PER_S


def test_bad_checksum_is_named():
    bad = LEO_TLE[0][:-1] + str((int(LEO_TLE[0][-1]) + 1) % 10)
    with pytest.raises(PhysicsInputError) as info:
        TleOrbit(bad, LEO_TLE[1], None)
    assert info.value.field == "line1" and "checksum" in info.value.reason  # physics' own name


def test_decay_mid_span_is_an_input_error(ts):
    # A very low, high-drag orbit: SGP4 reports decay (error 6) a few days in.
    def line(text):
        return text + str(sum(int(c) if c.isdigit() else (1 if c == "-" else 0) for c in text) % 10)

    l1 = line("1 99872U 27902A   27060.25000000  .05000000  00000-0  90000-1 0  999")
    l2 = line("2 99872  51.6000 100.0000 0005000  10.0000 350.0000 16.30000000  123")
    src = TleOrbit(l1, l2, ts)
    span = Span(ts.utc(2027, 3, 1, 6), 60 * 86400.0)
    with pytest.raises(PhysicsInputError) as info:
        compute_budget(BudgetInputs(src, "TT", span, GravityModel(2, False, False)))
    # physics writes no calendar text: the failing instant travels as a Time, inside the span
    assert "SGP4" in info.value.reason and "2027-" not in info.value.reason
    at_s = float(span.seconds_after_start(info.value.at))
    assert 0.0 < at_s <= span.duration_s


def test_leo_budget_runs_with_sun_and_moon(ts):
    src = TleOrbit(*LEO_TLE, ts)
    span = Span(ts.utc(2027, 3, 1, 6), 3 * 86400.0)
    b = as_dict(compute_budget(BudgetInputs(src, "TT", span, GravityModel(4, True, True))))
    # A ~700 km LEO clock loses on TT: velocity dominates (common practice: about -25 us/day).
    assert -30.0 < b["mean_rate_us_per_day"] < -20.0
    assert b["integration_error_estimate_ps_per_day"] < 1.0


def test_perigee_inside_the_earth_is_refused_before_propagation(ts):
    """Mean motion 2.0056 rev/day, e = 0.95: a = (GM / n^2)^(1/3) = 26,562 km (Kepler's third law,
    WGS-72 GM = 398600.8 km^3/s^2 as SGP4 uses), perigee radius a (1 - e) = 1,328 km: inside the
    Earth. It used to fail mid-span with SGP4's decay error."""
    def line(text):
        return text + str(sum(int(c) if c.isdigit() else (1 if c == "-" else 0) for c in text) % 10)

    l1 = line("1 99873U 27903A   27060.25000000  .00000000  00000-0  00000-0 0  999")
    l2 = line("2 99873  63.4000 100.0000 9500000 270.0000  10.0000  2.00560000  123")
    n_rad_per_s = 2.0056 * 2 * np.pi / 86400.0
    # WGS-72 GM, km^3/s^2 (Hoots & Roehrich 1980, Spacetrack Report No. 3; Vallado et al. 2006)
    perigee_km = (398600.8 / n_rad_per_s**2) ** (1 / 3) * (1 - 0.95)
    with pytest.raises(PhysicsInputError) as info:
        TleOrbit(l1, l2, ts)
    assert info.value.field == "line2" and "below the Earth's equatorial radius" in info.value.reason
    quoted_km = float(info.value.reason.split("perigee radius ")[1].split(" km")[0])
    assert quoted_km == pytest.approx(perigee_km, rel=2e-3)  # SGP4's un-Kozai'd a differs by ~1e-3
