"""The GPS clock figures: Kouba (2004), GPS Solutions 8(3):170-180, and IS-GPS-200.

Circular orbit, a = 26,561.4 km, point-mass Earth, GM = 3.986004418e14 (TCG-compatible):
the clock gains 38,575.008 ns/day on TT, so its oscillator is set low by 4.4647e-10,
i.e. 10.22999999543 MHz for the 10.23 MHz nominal (IS-GPS-200 section 3.3.1.1).
"""

from support.budgets import kepler_budget
from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, L_G

ONE_NS_PER_DAY_US = 0.001  # tolerance the issue sets: 0.001 us/day
PRESET_TOLERANCE = 1e-14  # the published preset has 5 significant digits (-4.4647e-10)
HZ_TOLERANCE = 1e-5  # 10.22999999543 MHz is published to 1e-11 MHz = 1e-5 Hz


def test_gps_circular_orbit_gains_38575_ns_per_day(ts):
    _, _, b = kepler_budget(ts, 26561.4, 0.0, 86400.0, nominal_frequency_hz=10.23e6)
    # Kouba 2004, section 2: 38,575.008 ns/day.
    assert abs(b["mean_rate_us_per_day"] - 38.575008) < ONE_NS_PER_DAY_US
    assert abs(b["offset_at_end_ns"] - 38575.008) < 1.0


def test_gps_frequency_preset(ts):
    _, _, b = kepler_budget(ts, 26561.4, 0.0, 86400.0, nominal_frequency_hz=10.23e6)
    # Kouba 2004 / IS-GPS-200: fractional offset -4.4647e-10, 10.22999999543 MHz.
    assert abs(b["frequency_preset_fractional"] - (-4.4647e-10)) < PRESET_TOLERANCE
    assert abs(b["preset_frequency_hz"] - 10.22999999543e6) < HZ_TOLERANCE


def test_circular_rate_matches_closed_form(ts):
    # Circular point-mass secular rate against TT: y = L_G - 3GM/(2ac^2) to first order
    # (DESIGN.md; TN36 eq. 10.6 with v^2 = GM/a); exact form (L_G - 3GM/2ac^2)/(1-L_G).
    a_m = 26561.4e3
    expected = (L_G - 1.5 * GM_EARTH_TCG_M3_PER_S2 / (a_m * C2_M2_PER_S2)) / (1 - L_G)
    _, _, b = kepler_budget(ts, 26561.4, 0.0, 86400.0)
    assert abs(b["mean_fractional_rate"] - expected) < 1e-18
