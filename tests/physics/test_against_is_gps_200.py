"""IS-GPS-200 relativistic correction constant F (section 20.3.3.3.3.1)."""

from taubudget.physics.constants import GPS_F_S_PER_SQRT_M

# IS-GPS-200: F = -2 sqrt(mu)/c^2 = -4.442807633e-10 s/m^(1/2), mu = 3.986005e14.
PUBLISHED_F = -4.442807633e-10
TEN_DIGITS = 1e-19  # the published value carries ten significant digits


def test_relativistic_constant_f():
    assert abs(GPS_F_S_PER_SQRT_M - PUBLISHED_F) < TEN_DIGITS
