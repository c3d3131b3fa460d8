"""IS-GPS-200 relativistic correction constant F and eccentricity term (section 20.3.3.3.3.1)."""

import math

from support.budgets import kepler_budget
from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, GPS_F_S_PER_SQRT_M

# IS-GPS-200: F = -2 sqrt(mu)/c^2 = -4.442807633e-10 s/m^(1/2), mu = 3.986005e14.
PUBLISHED_F = -4.442807633e-10
TEN_DIGITS = 1e-19  # the published value carries ten significant digits


def test_relativistic_constant_f():
    assert abs(GPS_F_S_PER_SQRT_M - PUBLISHED_F) < TEN_DIGITS


# --- The eccentricity term as IS-GPS-200 states it (section 20.3.3.3.3.1) ---------------------
# delta_t_r = F e sqrt(A) sin E_k: an absolute term of the satellite clock correction, not one
# counted from the span start; its amplitude is |F| e sqrt(A) = 2 sqrt(GM a) e / c^2 (closed form).

ONE_PS = 1e-3  # ns: the refined extremes must reach the analytic amplitude to a picosecond


def _eccentric_anomaly(m, e):
    big_e = m
    for _ in range(50):
        big_e = big_e - (big_e - e * math.sin(big_e) - m) / (1.0 - e * math.cos(big_e))
    return big_e


def test_series_eccentricity_term_is_absolute(ts):
    a_m, e, m0 = 27_977.6e3, 0.162, 10.0
    _, _, b = kepler_budget(ts, a_m / 1e3, e, 86400.0, series_step_s=3600.0, m0_deg=m0)
    big_e = _eccentric_anomaly(math.radians(m0), e)
    expected_ns = -2.0 * math.sqrt(GM_EARTH_TCG_M3_PER_S2 * a_m) * e * math.sin(big_e) / C2_M2_PER_S2 * 1e9
    assert abs(b["series"]["eccentricity_term_ns"][0] - expected_ns) < ONE_PS
    assert abs(expected_ns) > 10.0  # not zero at the start: the test can fail


def test_eccentricity_and_periodic_amplitudes_reach_the_closed_form(ts):
    # a = 27,977.6 km, e = 0.162: 2 sqrt(GM a) e / c^2 = 380.695 ns; the sampled grid gave 380.628.
    a_m, e = 27_977.6e3, 0.162
    analytic_ns = 2.0 * math.sqrt(GM_EARTH_TCG_M3_PER_S2 * a_m) * e / C2_M2_PER_S2 * 1e9
    for days in (0.9, 2.0, 3.3):
        _, _, b = kepler_budget(ts, a_m / 1e3, e, days * 86400.0)
        assert abs(b["eccentricity_correction"]["amplitude_ns"] - analytic_ns) < ONE_PS
        # Two-body, point-mass Earth: the periodic part is the eccentricity term itself.
        assert abs(b["periodic"]["amplitude_ns"] - analytic_ns) < ONE_PS
