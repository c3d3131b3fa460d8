"""Orientation of the Moon and Mars from the IAU WGCCRE rotation elements.

The body-fixed frame has its pole at right ascension alpha0 and declination
delta0 (ICRF) and its prime meridian at angle W from the node of the body's
equator on the ICRF equator; ICRF -> body-fixed is Rz(W) Rx(90 - delta0)
Rz(90 + alpha0) (Archinal et al. 2011, Celest. Mech. Dyn. Astr. 109:101,
section 2; the same convention in the 2015 report, Archinal et al. 2018).

Moon: IAU recommended model with the E1..E13 arguments (Archinal et al.
2011, Table 2). It approximates the lunar mean-Earth/polar axis frame to
~150 m on the surface, which moves a clock's Earth tidal potential by < 1e-17
in rate. Mars: Archinal et al. 2011 Table 1 secular model. Every coefficient
here (Moon pole, prime meridian, the 13 periodic amplitudes of each and the
E1..E13 phases and rates; Mars pole and W) was checked term by term against a
public copy of NAIF's text PCK pck00010 (BODY301_*, BODY3_NUT_PREC_ANGLES in
degrees per century = our per-day rates x 36525, BODY499_*), which carries
the 2009 IAU report's values. The 2015 report (Archinal et al. 2018, NAIF's
pck00011, whose E1..E13 are the same) keeps the Moon's model but replaces
Mars's by one with periodic terms and a new W0; this module uses the 2009
Mars model.
d = days and T = Julian centuries of TDB from J2000.
"""

from __future__ import annotations

import numpy as np

from .constants import SECONDS_PER_DAY

_DEG = np.pi / 180.0

# (coefficient_deg, argument index) for alpha0 (sin), delta0 (cos), W (sin).
_MOON_E = np.array([
    (125.045, -0.0529921), (250.089, -0.1059842), (260.008, 13.0120009), (176.625, 13.3407154),
    (357.529, 0.9856003), (311.589, 26.4057084), (134.963, 13.0649930), (276.617, 0.3287146),
    (34.226, 1.7484877), (15.134, -0.1589763), (119.743, 0.0036096), (239.961, 0.1643573),
    (25.053, 12.9590088),
])
_MOON_ALPHA = np.array([-3.8787, -0.1204, 0.0700, -0.0172, 0.0, 0.0072, 0.0, 0.0, 0.0, -0.0052, 0.0, 0.0,
                        0.0043])
_MOON_DELTA = np.array([1.5419, 0.0239, -0.0278, 0.0068, 0.0, -0.0029, 0.0009, 0.0, 0.0, 0.0008, 0.0, 0.0,
                        -0.0009])
_MOON_W = np.array([3.5610, 0.1208, -0.0642, 0.0158, 0.0252, -0.0066, -0.0047, -0.0046, 0.0028, 0.0052,
                    0.0040, 0.0019, -0.0044])

MOON_ROTATION_RATE_RAD_PER_S = 13.17635815 * _DEG / SECONDS_PER_DAY
"""Mean sidereal rotation rate of the Moon, rad/s (Archinal et al. 2011, Table 2)."""

MARS_ROTATION_RATE_RAD_PER_S = 350.89198226 * _DEG / SECONDS_PER_DAY
"""Sidereal rotation rate of Mars, rad/s (Archinal et al. 2011, Table 1)."""


def pole_and_meridian_rad(body: str, d_tdb: np.ndarray):
    """(alpha0, delta0, W) in radians at ``d_tdb`` days of TDB from J2000."""
    d = np.asarray(d_tdb, dtype=float)
    t = d / 36525.0
    if body == "moon":
        e = (_MOON_E[:, 0][:, None] + _MOON_E[:, 1][:, None] * d[None, :]) * _DEG
        alpha = 269.9949 + 0.0031 * t + _MOON_ALPHA @ np.sin(e)
        delta = 66.5392 + 0.0130 * t + _MOON_DELTA @ np.cos(e)
        w = 38.3213 + 13.17635815 * d - 1.4e-12 * d * d + _MOON_W @ np.sin(e)
    elif body == "mars":
        alpha = 317.68143 - 0.1061 * t
        delta = 52.88650 - 0.0609 * t
        w = 176.630 + 350.89198226 * d
    else:
        raise ValueError(f"no rotation model for {body!r}")
    return alpha * _DEG, delta * _DEG, w * _DEG


def body_fixed_to_icrf(body: str, d_tdb: np.ndarray) -> np.ndarray:
    """(N, 3, 3) matrices taking body-fixed vectors to ICRF axes."""
    a, dlt, w = pole_and_meridian_rad(body, np.atleast_1d(d_tdb))

    def rz(x):
        c, s = np.cos(x), np.sin(x)
        z, o = np.zeros_like(x), np.ones_like(x)
        return np.moveaxis(np.array([[c, s, z], [-s, c, z], [z, z, o]]), -1, 0)

    def rx(x):
        c, s = np.cos(x), np.sin(x)
        z, o = np.zeros_like(x), np.ones_like(x)
        return np.moveaxis(np.array([[o, z, z], [z, c, s], [z, -s, c]]), -1, 0)

    icrf_to_bf = rz(w) @ rx(np.pi / 2 - dlt) @ rz(np.pi / 2 + a)
    return np.transpose(icrf_to_bf, (0, 2, 1))
