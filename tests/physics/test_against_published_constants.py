"""Constants checked against their published sources (issue 10, section 7).

- IERS Conventions 2010 (TN36) Table 3.1: mass parameters of DE421, TDB-compatible, km^3/s^2.
- TN36 ch. 3: the DE421 astronomical unit, 149597870.6996262 km (TDB-compatible), with Gauss's
  constant k = 0.01720209895 gives GM_sun = k^2 au^3 / day^2 (IAU 1976 Resolution 10).
- EGM2008 coefficient file (Pavlis, Holmes, Kenyon & Factor 2012; the released EGM2008.gfc header
  lines): fully normalised, tide-free C20..C60, C22, S22.
"""

import math

from taubudget.physics import constants as k

KM3 = 1e9
TN36_TABLE_3_1_KM3_PER_S2 = {
    "mercury": 22032.090000, "venus": 324858.592000, "mars": 42828.375214,
    "jupiter": 126712764.800000, "saturn": 37940585.200000, "uranus": 5794548.600000,
    "neptune": 6836535.000000,
}
EGM2008_GFC = {(2, 0): -0.484165143790815e-03, (3, 0): 0.957161207093473e-06,
               (4, 0): 0.539965866638991e-06, (2, 2): 0.243938357328313e-05}
EGM2008_GFC_S22 = -0.140027370385934e-05


def test_de421_planetary_gms_are_tn36_table_3_1():
    for body, gm in TN36_TABLE_3_1_KM3_PER_S2.items():
        assert k.GM_PLANET_SYSTEMS_M3_PER_S2[body] == gm * KM3, body
    assert k.GM_EARTH_DE421_M3_PER_S2 == 398600.436233 * KM3
    assert k.GM_MOON_M3_PER_S2 == 4902.800076 * KM3


def test_de421_sun_gm_follows_from_its_au():
    au_km = 149597870.6996262
    gm_sun = 0.01720209895**2 * au_km**3 / 86400.0**2 * KM3
    assert abs(k.GM_SUN_M3_PER_S2 - gm_sun) < 1e-12 * gm_sun


def test_egm2008_coefficients_are_the_released_file():
    for (n, m), c in EGM2008_GFC.items():
        if m == 0:
            assert k.EGM2008_NORMALIZED_ZONALS[n] == c
    assert k.EGM2008_C22 == EGM2008_GFC[(2, 2)] and k.EGM2008_S22 == EGM2008_GFC_S22
    # The sectoral size quoted among the omitted terms: sqrt(C22^2 + S22^2) = 2.81e-6.
    assert math.isclose(math.hypot(k.EGM2008_C22, k.EGM2008_S22), 2.8127e-6, rel_tol=1e-4)
