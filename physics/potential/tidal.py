"""Tidal potential of the Sun and the Moon at a geocentric position.

    U_tid(x) = sum_b GM_b [ 1/|X_b - x| - 1/|X_b| - x . X_b / |X_b|^3 ]

(TN36 eq. 10.6; X_b the body's geocentric position). Evaluated in a
cancellation-safe form: with u = (|x|^2 - 2 x.X)/|X|^2,
1/|X - x| - 1/|X| = ((1 + u)^(-1/2) - 1)/|X| = expm1(-log1p(u)/2)/|X|, so
only the last subtraction of the first-order term loses digits (about 4 for
the Sun at GPS altitude, leaving 1e-12 relative accuracy).

Geocentric Sun and Moon positions come from DE421 (skyfield) on a coarse grid
(``SUN_MOON_GRID_STEP_S``) and are interpolated with cubic splines; the
interpolation error is bounded in tests/physics/test_frames_and_tides.py.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline

from ..constants import GM_MOON_M3_PER_S2, GM_SUN_M3_PER_S2
from ..ephemeris import ephemeris
from ..frames import coarse_grid_s

SUN_MOON_GRID_STEP_S = 3600.0
"""Coarse-grid spacing for geocentric Sun/Moon positions, s (error bound tested)."""

BODY_GM_M3_PER_S2 = {"sun": GM_SUN_M3_PER_S2, "moon": GM_MOON_M3_PER_S2}


def tidal_potential(r_m: np.ndarray, body_m: np.ndarray, gm_m3_per_s2: float) -> np.ndarray:
    """Tidal potential (m^2/s^2) at (N, 3) geocentric positions from a body at (N, 3)."""
    big2 = np.einsum("ni,ni->n", body_m, body_m)
    big = np.sqrt(big2)
    dot = np.einsum("ni,ni->n", r_m, body_m)
    r2 = np.einsum("ni,ni->n", r_m, r_m)
    u = (r2 - 2.0 * dot) / big2
    return gm_m3_per_s2 / big * (np.expm1(-0.5 * np.log1p(u)) - dot / big2)


@dataclass
class SunMoonPositions:
    """Interpolated geocentric GCRS positions of the Sun and the Moon over a span."""

    splines: dict[str, CubicSpline]

    @classmethod
    def for_span(cls, span, bodies=("sun", "moon"), step_s: float = SUN_MOON_GRID_STEP_S):
        eph = ephemeris()
        grid = coarse_grid_s(span, step_s)
        t = span.times(grid)
        earth = eph["earth"].at(t).position.m
        splines = {}
        for name in bodies:
            pos = eph[name].at(t).position.m - earth  # (3, N); ICRS axes = GCRS axes
            splines[name] = CubicSpline(grid, pos.T)
        return cls(splines)

    def position_m(self, body: str, t_s: np.ndarray) -> np.ndarray:
        return self.splines[body](t_s)
