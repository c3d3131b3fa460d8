"""Keplerian orbits in a J2 field against closed forms.

Outside references:
- a circular orbit of radius r in the equator of a J2 field has
  v^2 = GM/r (1 + 3/2 J2 (R/r)^2) and U = GM/r (1 + J2/2 (R/r)^2) (the radial force balance
  v^2/r = -dU/dr of U = GM/r [1 - J2 (R/r)^2 P2(0)]; DESIGN.md "Orbits in an oblate field"),
  so its rate against TT is (L_G - (v^2/2 + U)/c^2)/(1 - L_G) (TN36 eqs. 10.2, 10.6):
  -24.65213 us/day at r = 6778.137 km (EGM2008 J2 and reference radius);
- the first-order secular rates of the node and the perigee (Brouwer 1959; Vallado,
  Fundamentals of Astrodynamics and Applications, 4th ed., eqs. 9-41 and 9-42):
  dRAAN/dt = -3/2 n J2 (R/p)^2 cos i,  dargp/dt = 3/4 n J2 (R/p)^2 (5 cos^2 i - 1).
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import (
    C2_M2_PER_S2,
    EGM2008_J,
    EGM2008_REFERENCE_RADIUS_M,
    GM_EARTH_TCG_M3_PER_S2,
    L_G,
    SECONDS_PER_DAY,
)
from taubudget.physics.environment import environment_for
from taubudget.physics.kepler import elements_to_state
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.orbits.numerical import NumericalOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

GM, J2, R = GM_EARTH_TCG_M3_PER_S2, EGM2008_J[2], EGM2008_REFERENCE_RADIUS_M
J2_ONLY = GravityModel(2, sun=False, moon=False)
RADIUS_M = 6778.137e3
CLOSED_FORM_TOLERANCE = 1e-16  # issue 10, check (b)
# The closed forms are first order: second-order terms and the difference between the osculating
# elements used here and the mean ones are O(J2 (R/p)^2) = 7e-4 relative with coefficients up
# to ~6 (measured: node 1.4e-4 / 1.4e-3, perigee 2.2e-3 / 4.0e-3 for the theory / the
# integration). Without J2 motion (the earlier Keplerian source) the error is 100 %.
SECULAR_RATE_RELATIVE = 1e-2


def _closed_form_rate(r_m):
    k = J2 * (R / r_m) ** 2
    v2 = GM / r_m * (1.0 + 1.5 * k)
    u = GM / r_m * (1.0 + 0.5 * k)
    return (L_G - (0.5 * v2 + u) / C2_M2_PER_S2) / (1.0 - L_G), v2


def test_closed_form_value_matches_the_issue():
    # Issue 10 quotes -24.6521 us/day for this orbit.
    y, _ = _closed_form_rate(RADIUS_M)
    assert abs(y * SECONDS_PER_DAY * 1e6 - (-24.6521)) < 1e-4


@pytest.fixture(scope="module")
def circle(ts):
    start = ts.utc(2027, 3, 1)
    span = Span(start, 2 * SECONDS_PER_DAY)
    rot = np.asarray(start.M)  # GCRS -> true equator of date: the field's equator is rot's xy plane
    return start, span, rot


def test_circular_equatorial_state_vector_matches_closed_form(circle):
    start, span, rot = circle
    y, v2 = _closed_form_rate(RADIUS_M)
    src = NumericalOrbit(start, rot.T @ [RADIUS_M, 0.0, 0.0], rot.T @ [0.0, math.sqrt(v2), 0.0],
                         zonal_degree=2, sun=False, moon=False)
    got = compute_budget(BudgetInputs(src, "TT", span, J2_ONLY)).secular_rate_per_tt_s
    assert abs(got - y) < CLOSED_FORM_TOLERANCE


def test_circular_equatorial_mean_elements_match_closed_form(circle):
    # In Brouwer's theory a circular equatorial orbit of mean semi-major axis a has the radius
    # a (1 - 3/2 J2 (R/a)^2) (the short-period dr at e = 0, i = 0), exactly: the elements
    # describe the circle of radius r, and the rate must be the closed form's.
    start, span, rot = circle
    y, _ = _closed_form_rate(RADIUS_M)
    a_mean = brentq(lambda a: a * (1.0 - 1.5 * J2 * (R / a) ** 2) - RADIUS_M, RADIUS_M, 1.01 * RADIUS_M,
                    xtol=1e-9)
    pole = rot[2]  # elements are referred to the GCRS equator: tilt them onto the true equator
    inc = math.degrees(math.atan2(math.hypot(pole[0], pole[1]), pole[2]))
    raan = math.degrees(math.atan2(pole[0], -pole[1]))
    src = KeplerianOrbit(start, a_mean, 0.0, inc, raan, 0.0, 0.0, element_type="mean", zonal_degree=2)
    got = compute_budget(BudgetInputs(src, "TT", span, J2_ONLY)).secular_rate_per_tt_s
    assert abs(got - y) < CLOSED_FORM_TOLERANCE


def _node_and_perigee(r_gcrs, v_gcrs, rot):
    """Osculating node and argument of perigee about the field's axis, unwrapped, rad."""
    r, v = r_gcrs @ rot.T, v_gcrs @ rot.T
    h = np.cross(r, v)
    raan = np.unwrap(np.arctan2(h[:, 0], -h[:, 1]))
    node = np.stack([np.cos(raan), np.sin(raan), np.zeros_like(raan)], axis=1)
    h_hat = h / np.linalg.norm(h, axis=1)[:, None]
    q_hat = np.cross(h_hat, node)
    e_vec = np.cross(v, h) / GM - r / np.linalg.norm(r, axis=1)[:, None]
    argp = np.unwrap(np.arctan2(np.einsum("ni,ni->n", e_vec, q_hat), np.einsum("ni,ni->n", e_vec, node)))
    return raan, argp


@pytest.mark.parametrize("path", ["osculating_elements", "state_vector"])
def test_secular_node_and_perigee_rates(ts, path):
    start = ts.utc(2027, 3, 1)
    days = 4.0
    span = Span(start, days * SECONDS_PER_DAY)
    a, e, inc = 8000e3, 0.1, 40.0
    kep = KeplerianOrbit(start, a, e, inc, 30.0, 60.0, 0.0, zonal_degree=2)
    if path == "state_vector":
        r0, v0, _ = elements_to_state(GM, a, e, *np.radians([inc, 30.0, 60.0, 0.0]))
        src = NumericalOrbit(start, r0[0], v0[0], zonal_degree=2, sun=False, moon=False)
    else:
        src = kep
    t = np.linspace(0.0, span.duration_s, 4001)
    st = src.states(span, t, environment_for(span).orientation)
    raan, argp = _node_and_perigee(st.r_gcrs_m, st.v_gcrs_m_per_s, np.asarray(start.M))
    raan_rate = np.polyfit(t * (1.0 - L_G), raan, 1)[0]  # per TCG second, as the theory's n
    argp_rate = np.polyfit(t * (1.0 - L_G), argp, 1)[0]
    n = math.sqrt(GM / a**3)
    k = J2 * (R / (a * (1 - e * e))) ** 2
    c = math.cos(math.radians(inc))
    assert abs(raan_rate / (-1.5 * n * k * c) - 1.0) < SECULAR_RATE_RELATIVE
    assert abs(argp_rate / (0.75 * n * k * (5 * c * c - 1)) - 1.0) < SECULAR_RATE_RELATIVE
