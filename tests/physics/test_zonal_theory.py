"""The first-order J2 element theory on its own (physics/orbits/zonal_theory.py).

Outside references: the energy integral v^2/2 - U of a static axisymmetric field, which a
first-order theory keeps to O(J2^2) (Brouwer 1959), and the numerical integration of the same
field (scipy DOP853) from the theory's own state, which it follows to O(J2^2 a) radially.
"""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from taubudget.physics.constants import EGM2008_J, EGM2008_REFERENCE_RADIUS_M, GM_EARTH_TCG_M3_PER_S2
from taubudget.physics.orbits.numerical import zonal_acceleration
from taubudget.physics.orbits.zonal_energy import potential_pole_frame
from taubudget.physics.orbits.zonal_theory import (
    J2Field,
    MeanElements,
    mean_from_osculating,
    osculating_state,
)

GM = GM_EARTH_TCG_M3_PER_S2
FIELD = J2Field(GM, EGM2008_J[2], EGM2008_REFERENCE_RADIUS_M)
POLE = np.array([0.0, 0.0, 1.0])
# J2^2 ~ 1.2e-6: the energy of a first-order state varies at that order; a wrong first-order
# term would make it vary at J2 ~ 1e-3.
ENERGY_SECOND_ORDER = 1e-5
RADIAL_SECOND_ORDER_M = 40.0  # J2^2 a ~ 10 m; a missing first-order term gives km
ROUND_TRIP_M = 1e-6

ORBITS = [(6778e3, 0.0, 51.6, 0.0), (6778e3, 0.01, 28.5, 40.0), (26560e3, 0.005, 55.0, 30.0),
          (20000e3, 0.6, 63.4, 270.0), (6778e3, 0.0, 0.0, 0.0), (7200e3, 0.001, 180.0, 0.0)]


def _rhs(_, y):
    r = y[:3]
    acc = -GM * r / np.linalg.norm(r) ** 3 + zonal_acceleration(r[None], POLE, 2)[0]
    return np.concatenate([y[3:], acc])


@pytest.mark.parametrize("a, e, inc, argp", ORBITS)
def test_energy_is_kept_to_second_order(a, e, inc, argp):
    el = MeanElements(a, e, math.radians(inc), 0.3, math.radians(argp), 0.5)
    t = np.linspace(0.0, 86400.0, 500)
    pos, vel = osculating_state(el, FIELD, t)
    energy = 0.5 * np.einsum("ni,ni->n", vel, vel) - potential_pole_frame(pos, 2, GM)
    assert np.ptp(energy) < ENERGY_SECOND_ORDER * abs(energy.mean())


@pytest.mark.parametrize("a, e, inc, argp", ORBITS[:4])
def test_radius_follows_the_integration(a, e, inc, argp):
    el = MeanElements(a, e, math.radians(inc), 0.3, math.radians(argp), 0.5)
    r0, v0 = osculating_state(el, FIELD, 0.0)
    period = 2 * math.pi * math.sqrt(a**3 / GM)
    t = np.linspace(0.0, 3 * period, 600)  # a few orbits: along-track drift stays small
    sol = solve_ivp(_rhs, (0.0, t[-1]), np.concatenate([r0[0], v0[0]]), method="DOP853", rtol=1e-12,
                    atol=1e-6, t_eval=t)
    pos, _ = osculating_state(el, FIELD, t)
    radial = np.linalg.norm(sol.y[:3].T, axis=1) - np.linalg.norm(pos, axis=1)
    assert np.max(np.abs(radial)) < RADIAL_SECOND_ORDER_M


@pytest.mark.parametrize("a, e, inc, argp", ORBITS)
def test_mean_from_osculating_reproduces_the_state(a, e, inc, argp):
    el = MeanElements(a, e, math.radians(inc), 0.3, math.radians(argp), 0.5)
    r0, v0 = osculating_state(el, FIELD, 0.0)
    back = mean_from_osculating(r0[0], v0[0], FIELD)
    r1, v1 = osculating_state(back, FIELD, 0.0)
    assert np.max(np.abs(r1 - r0)) < ROUND_TRIP_M
    assert abs(back.a_m - a) < 1e-3
