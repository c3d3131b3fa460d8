"""Barycentric references share TT's mean rate: TDB - TT has no secular part (issue 10, section 2).

Sources: IERS Conventions 2010 (TN36) ch. 10: TDB = TCB - L_B (TCB - T0) + TDB0 (eq. 10.1) with
L_B chosen so that TDB and TT keep step on average; TDB - TT is periodic (Fairhead & Bretagnon 1990,
as implemented in pyerfa's ``dtdb``). So a clock's mean rate against TDB equals its rate against
TT, and against TCB it is (1 + y_TT)(1 - L_B) - 1 (L_B defining, TN36 Table 1.1).
"""

import erfa
import numpy as np
import pytest
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import L_B
from taubudget.physics.orbits import SurfaceClock
from taubudget.physics.orbits.barycentric import BodySurfaceClock, CentredKeplerianOrbit
from taubudget.physics.span import Span

ONE_E_15 = 1e-15  # issue 10, section 2: the mean rate of a geoid clock against TDB
DAY_S = 86400.0


def _rate(ts, source, reference, days, start=(2027, 1, 1), **kw):
    span = Span(ts.utc(*start), days * DAY_S)
    return compute_budget(BudgetInputs(source, reference, span, **kw))


@pytest.mark.parametrize("days", [7.0, 30.0, 365.25, 730.5])
def test_geoid_clock_against_tdb_has_no_mean_rate(ts, days):
    # A clock on the geoid keeps TT (TN36 Table 1.1: L_G = W0/c^2); TDB keeps TT's mean rate.
    # Today: -28.9 us/day over 7 days, 8.60 us/day over a year (the annual term leaks into the fit).
    geoid_clock = SurfaceClock(90.0, 0.0, 0.0, geoid_undulation_m=0.0)
    b = _rate(ts, geoid_clock, "TDB", days)
    assert abs(b.mean_fractional_rate) < ONE_E_15


@pytest.mark.parametrize("days", [7.0, 30.0, 200.0])
def test_any_clock_rate_is_the_same_against_tt_and_tdb(ts, days):
    # A Mars clock and a heliocentric probe: 508.5 vs 487.9 us/day today over 30 days.
    mars = BodySurfaceClock("mars", 18.4, 226.0, -2000.0)
    probe = CentredKeplerianOrbit("sun", ts.utc(2029, 2, 1), 1.6e11, 0.1, 1.5, 40.0, 200.0, 10.0,
                                  reference_plane="ecliptic_j2000")
    for clock in (mars, probe):
        tt = _rate(ts, clock, "TT", days, start=(2029, 2, 1)).mean_fractional_rate
        tdb = _rate(ts, clock, "TDB", days, start=(2029, 2, 1)).mean_fractional_rate
        tcb = _rate(ts, clock, "TCB", days, start=(2029, 2, 1)).mean_fractional_rate
        assert abs(tt - tdb) < ONE_E_15
        # TN36 eq. 10.1: dTDB/dTCB = 1 - L_B (the runs differ only in their quadrature panels).
        assert abs(tcb - ((1.0 + tdb) * (1.0 - L_B) - 1.0)) < ONE_E_15


def test_reference_periodic_part_is_tdb_minus_tt_from_pyerfa(ts):
    # The known bounded part removed before the fit is TDB - TT along the geocentre; pyerfa's dtdb
    # (Fairhead & Bretagnon 1990, geocentre: zero topocentric terms) is the outside reference. The
    # 1656.67 us annual term must agree within 100 ns over a year (DE421 vs the FB series, plus the
    # ~30 ns planetary terms both carry).
    from taubudget.physics.bounded_parts import tdb_minus_tt_periodic_s
    from taubudget.physics.solar_system import solar_system_for

    span = Span(ts.utc(2027, 1, 1), 365.25 * DAY_S)
    t = np.linspace(0.0, span.duration_s, 400)
    ours = tdb_minus_tt_periodic_s(span, solar_system_for(span), t)
    tt = span.times(t)
    theirs = erfa.dtdb(np.asarray(tt.whole), np.asarray(tt.tdb_fraction), 0.0, 0.0, 0.0, 0.0)
    theirs = theirs - theirs[0]
    assert np.max(np.abs(ours - theirs)) < 100e-9
    assert np.ptp(theirs) > 3e-3  # the annual term is really there (peak to peak ~3.3 ms)


def test_mars_clock_periodic_part_excludes_tts_own_oscillation(ts):
    # Against TT, a Mars clock's offset carries TDB - TT (pyerfa dtdb: 1.66 ms annual), which is the
    # reference's oscillation; the clock's own periodic part is the same against TT and TDB.
    from support.budgets import as_dict

    mars = BodySurfaceClock("mars", 18.4, 226.0, -2000.0)
    tt = as_dict(_rate(ts, mars, "TT", 120.0, start=(2029, 2, 1)))["periodic"]
    tdb = as_dict(_rate(ts, mars, "TDB", 120.0, start=(2029, 2, 1)))["periodic"]
    assert abs(tt["amplitude_ns"] - tdb["amplitude_ns"]) < 1.0  # ns, of ~1e5 ns
    assert tt["amplitude_with_position_term_ns"] - tdb["amplitude_with_position_term_ns"] > 1e3
