"""Keplerian elements in the Earth's zonal field: the orbit follows the field the rate evaluates.

Outside references:
- a numerical integration of the same field (scipy's DOP853, Hairer, Norsett & Wanner,
  "Solving ODEs I", II.5, through ``NumericalOrbit``) started from the same GCRS state:
  issue 10 asks the mean rates to agree within 2e-15 in LEO at low inclination and at
  GPS altitude;
- the energy integral v^2/2 - U = const of motion in a static axisymmetric field;
- the size of a first-order theory's error, O(J2^2) (Brouwer 1959), against the same
  integration: metres radially over a day, where leaving out the J2 motion costs km;
- the two-body conversion of the elements (Vallado, 4th ed., algorithm 10) when the
  field is a point mass.
"""

import math

import numpy as np
import pytest
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import GM_EARTH_TCG_M3_PER_S2, SECONDS_PER_DAY
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.kepler import elements_to_state
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.orbits.numerical import NumericalOrbit
from taubudget.physics.potential.earth import earth_potential
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

MEAN_RATE_AGREEMENT = 2e-15  # issue 10, check (a)
ENERGY_RELATIVE = 1e-14  # the speed is set from the energy: only rounding is left
# A first-order theory's radial error is O(J2^2 a): ~10 m in LEO. Leaving out the J2 motion
# (the earlier two-body source) gives km; 100 m separates the two with a margin.
RADIAL_100_M = 100.0
PERIODIC_RELATIVE = 0.02  # first-order theory: the periodic part is right to O(J2) ~ 1e-3, 2 % margin
# Measured 5 to 50 ps over 2 to 5 days (J4..J6 short-period terms and second order are left out).
PERIODIC_TWENTY_PS_S = 20e-12

GM = GM_EARTH_TCG_M3_PER_S2


def _pair(ts, a_m, e, inc, degree, days, raan=30.0, argp=40.0, m0=10.0):
    start = ts.utc(2027, 3, 1)
    span = Span(start, days * SECONDS_PER_DAY)
    kep = KeplerianOrbit(start, a_m, e, inc, raan, argp, m0, zonal_degree=degree)
    r0, v0, _ = elements_to_state(GM, a_m, e, *np.radians([inc, raan, argp, m0]))
    num = NumericalOrbit(start, r0[0], v0[0], zonal_degree=degree, sun=False, moon=False)
    return span, kep, num


@pytest.mark.parametrize("a_m, e, inc, degree, days", [
    (6778.137e3, 0.0, 0.0, 2, 2.0),      # the circular LEO, osculating
    (6878.0e3, 0.001, 28.5, 4, 2.0),     # LEO, low inclination, J2..J4
    (26561.75e3, 0.0042, 55.0, 4, 3.0),  # GPS altitude
])
def test_osculating_elements_agree_with_the_state_vector_path(ts, a_m, e, inc, degree, days):
    span, kep, num = _pair(ts, a_m, e, inc, degree, days)
    gravity = GravityModel(degree, sun=False, moon=False)
    ours = compute_budget(BudgetInputs(kep, "TT", span, gravity)).secular_rate_per_tt_s
    numerical = compute_budget(BudgetInputs(num, "TT", span, gravity)).secular_rate_per_tt_s
    assert abs(ours - numerical) < MEAN_RATE_AGREEMENT


def test_periodic_part_follows_the_state_vector_path(ts):
    # The offset after the preset (the periodic part) against the integration of the same field:
    # J2 short-period terms and the J3 long-period eccentricity (frozen-orbit) term are in the
    # theory; without the J3 term this LEO's periodic amplitude is 0.38 ns instead of 0.58 ns.
    span, kep, num = _pair(ts, 6878.0e3, 0.001, 28.5, 4, 2.0)
    gravity = GravityModel(4, sun=False, moon=False)
    ours = compute_budget(BudgetInputs(kep, "TT", span, gravity))
    ref = compute_budget(BudgetInputs(num, "TT", span, gravity))
    t = np.linspace(0.0, span.duration_s, 2001)
    assert np.max(np.abs(ours.after_preset_s(t) - ref.after_preset_s(t))) < PERIODIC_TWENTY_PS_S
    amp, amp_ref = (b.periodic.amplitude_s for b in (ours, ref))
    assert abs(amp / amp_ref - 1.0) < PERIODIC_RELATIVE


def test_state_at_epoch_is_the_two_body_conversion(ts):
    # Osculating elements: the state at the epoch is the two-body conversion, to the theory's
    # second order (the semi-major axis is tuned to the energy by O(J2^2 a)).
    span, kep, num = _pair(ts, 6878.0e3, 0.001, 28.5, 4, 1.0)
    env = environment_for(span)
    st = kep.states(span, np.array([0.0]), env.orientation)
    assert np.linalg.norm(st.r_gcrs_m[0] - num.r0_m) < 20.0
    assert np.linalg.norm(st.v_gcrs_m_per_s[0] - num.v0_m_per_s) < 0.02


@pytest.mark.parametrize("a_m, e, inc", [(6878.0e3, 0.001, 51.6), (7500.0e3, 0.1, 98.0),
                                         (26561.75e3, 0.0042, 55.0), (20000e3, 0.6, 63.4)])
def test_trajectory_follows_the_field(ts, a_m, e, inc):
    span, kep, num = _pair(ts, a_m, e, inc, 2, 1.0)
    env = environment_for(span)
    t = np.linspace(0.0, span.duration_s, 2001)
    ours = kep.states(span, t, env.orientation)
    ref = num.states(span, t, env.orientation)
    radial = np.linalg.norm(ours.r_gcrs_m, axis=1) - np.linalg.norm(ref.r_gcrs_m, axis=1)
    # Along-track phase errors move the radius of an eccentric orbit: compare at equal phase.
    if e > 0.01:
        ref_r = np.linalg.norm(ref.r_gcrs_m, axis=1)
        radial = np.array([np.min(np.abs(np.linalg.norm(ours.r_gcrs_m[i]) - ref_r[max(0, i - 3):i + 4]))
                           for i in range(len(t))])
    assert np.max(np.abs(radial)) < RADIAL_100_M
    # Energy integral with the field the budget evaluates.
    pole = env.orientation.pole_gcrs(t)
    u_mono, u_zonal = earth_potential(ours.r_gcrs_m, pole, 2)
    energy = 0.5 * np.einsum("ni,ni->n", ours.v_gcrs_m_per_s, ours.v_gcrs_m_per_s) - u_mono - u_zonal
    assert np.ptp(energy) < ENERGY_RELATIVE * abs(energy.mean())
    assert abs(energy[0] - ref_energy(num, env)) < ENERGY_RELATIVE * abs(energy.mean())


def ref_energy(num, env):
    pole = env.orientation.pole_gcrs(np.array([0.0]))
    u_mono, u_zonal = earth_potential(num.r0_m[None], pole, 2)
    return 0.5 * float(num.v0_m_per_s @ num.v0_m_per_s) - float(u_mono[0] + u_zonal[0])


@pytest.mark.parametrize("element_type", ["osculating", "mean"])
def test_point_mass_field_is_the_two_body_orbit(ts, element_type):
    start = ts.utc(2027, 3, 1)
    span = Span(start, SECONDS_PER_DAY)
    src = KeplerianOrbit(start, 7000e3, 0.05, 40.0, 10.0, 20.0, 30.0, element_type=element_type,
                         zonal_degree=0)
    t = np.linspace(0.0, span.duration_s, 11)
    st = src.states(span, t, None)
    n = math.sqrt(GM / 7000e3**3)
    r, v, _ = elements_to_state(GM, 7000e3, 0.05, *np.radians([40.0, 10.0, 20.0]), math.radians(30.0) + n * t)
    assert np.max(np.abs(st.r_gcrs_m - r)) < 1e-6
    assert np.max(np.abs(st.v_gcrs_m_per_s - v)) < 1e-9


def test_osculating_circle_is_not_a_circular_orbit(ts):
    # Two-body circular speed at r in a J2 field is below the circular speed
    # sqrt(GM/r (1 + 3/2 J2 (R/r)^2)): the orbit is eccentric (e ~ 3/2 J2 (R/r)^2) and the clock
    # sees a ~1.7 ns periodic term at the orbital period, as the numerical integration of the
    # same state shows. Read as mean elements, the same numbers are a circle: no periodic term.
    span, kep, num = _pair(ts, 6778.137e3, 0.0, 0.0, 2, 1.0, raan=0.0, argp=0.0, m0=0.0)
    gravity = GravityModel(2, sun=False, moon=False)
    ours = compute_budget(BudgetInputs(kep, "TT", span, gravity)).periodic.amplitude_s
    ref = compute_budget(BudgetInputs(num, "TT", span, gravity)).periodic.amplitude_s
    assert ref > 1.0e-9
    assert abs(ours / ref - 1.0) < PERIODIC_RELATIVE
    mean = KeplerianOrbit(span.start, 6778.137e3, 0.0, 0.0, 0.0, 0.0, 0.0, element_type="mean",
                          zonal_degree=2)
    circ = compute_budget(BudgetInputs(mean, "TT", span, gravity)).periodic.amplitude_s
    assert circ < 0.01 * ref


def test_bad_element_type_and_degree_are_refused(ts):
    start = ts.utc(2027, 3, 1)
    with pytest.raises(PhysicsInputError) as err:
        KeplerianOrbit(start, 7000e3, 0.0, 0.0, 0, 0, 0, element_type="apparent")
    assert err.value.field == "element_type"  # physics' own names; the app maps them to the request
    with pytest.raises(PhysicsInputError) as err:
        KeplerianOrbit(start, 7000e3, 0.0, 0.0, 0, 0, 0, zonal_degree=1)
    assert err.value.field == "zonal_degree"


def test_mean_elements_agree_with_the_state_vector_path_from_their_epoch_state(ts):
    # Mean elements: the integration started from the theory's own state at the epoch (whose
    # energy is the virial energy the speed is built from) has the same mean rate (issue 10 (a)).
    start = ts.utc(2027, 3, 1)
    span = Span(start, 2 * SECONDS_PER_DAY)
    env = environment_for(span)
    kep = KeplerianOrbit(start, 6878.0e3, 0.001, 51.6, 30.0, 40.0, 10.0, element_type="mean", zonal_degree=4)
    st = kep.states(span, np.array([0.0]), env.orientation)
    num = NumericalOrbit(start, st.r_gcrs_m[0], st.v_gcrs_m_per_s[0], zonal_degree=4, sun=False, moon=False)
    gravity = GravityModel(4, sun=False, moon=False)
    ours = compute_budget(BudgetInputs(kep, "TT", span, gravity)).secular_rate_per_tt_s
    numerical = compute_budget(BudgetInputs(num, "TT", span, gravity)).secular_rate_per_tt_s
    assert abs(ours - numerical) < MEAN_RATE_AGREEMENT


# Highly eccentric orbits: the orbit averages that set the mean semi-major axis must resolve the
# perigee passage. Outside reference: the perigee-to-perigee time (r.v = 0 crossing upwards) of
# scipy's DOP853 integrating the same J2 field about the same pole from the same state. Uniform
# samples in mean anomaly gave 10.2524 d against 10.1679 d at e = 0.95 (8e-3 off), 19.34 d
# against 18.42 d at e = 0.97, and NaN speeds at e = 0.98. The first-order theory itself is
# good to O(J2^2): 1e-5 leaves a margin of ~100 over the measured agreement (1e-7).
ANOMALISTIC_PERIOD_RELATIVE = 1e-5


@pytest.mark.parametrize("a_m, e", [(100_000e3, 0.9), (200_000e3, 0.95), (400_000e3, 0.98)])
def test_highly_eccentric_period_follows_the_integration(ts, a_m, e):
    from scipy.integrate import solve_ivp
    from taubudget.physics.orbits.numerical import zonal_acceleration

    start = ts.utc(2027, 3, 1)
    kep = KeplerianOrbit(start, a_m, e, 51.6, 0.0, 0.0, 0.0, zonal_degree=2)
    period = 2 * math.pi / kep.m_rate  # anomalistic, TT s (TCG differs by 7e-10)
    pole = np.asarray(start.M, dtype=float)[2]  # the true pole of the epoch, in the GCRS
    r0, v0, _ = elements_to_state(GM, a_m, e, math.radians(51.6), 0.0, 0.0, 0.0)

    def rhs(_, y):
        r = y[:3]
        return np.concatenate([y[3:], -GM * r / np.linalg.norm(r) ** 3
                               + zonal_acceleration(r[None], pole, 2)[0]])

    def perigee(_, y):
        return y[:3] @ y[3:]
    perigee.direction = 1.0
    sol = solve_ivp(rhs, (0.0, 1.5 * period), np.concatenate([r0[0], v0[0]]), method="DOP853",
                    rtol=1e-12, atol=1e-6, events=perigee)
    passages = sol.t_events[0][sol.t_events[0] > 0.5 * period]
    assert abs(passages[0] / period - 1.0) < ANOMALISTIC_PERIOD_RELATIVE

    span = Span(start, period)
    t = np.linspace(0.0, period, 4001)
    states = kep.states(span, t, environment_for(span).orientation)
    assert np.isfinite(states.v_gcrs_m_per_s).all()
