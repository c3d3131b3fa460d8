"""Earth orientation on a coarse grid: GCRS <-> ITRS and TEME -> GCRS at many nodes.

skyfield's frame rotations evaluate the IAU 2000A nutation series per time,
which costs ~50 µs per instant. The matrices involved vary slowly once the
daily spin is taken out, so we evaluate skyfield on a coarse grid and
interpolate with cubic splines at the quadrature nodes:

- ``M`` (skyfield ``t.M``, GCRS -> true equator and equinox of date; IAU 2006
  precession + IAU 2000A nutation) is interpolated element by element. Its
  fastest terms have periods of ~5 days, so the 3-hour grid used here leaves
  interpolation errors near 1e-13 rad (bounded in tests/physics/test_frames.py).
- The spin angle GAST is unwrapped and interpolated; its non-linear part is
  slow (UT1 - TT and nutation in longitude).
- TEME -> GCRS (skyfield ``TEME.rotation_at``) has no daily spin at all.

The rotation to the ITRS is ``rot_z(-GAST) M`` as in skyfield's ``itrs``
frame; polar motion (< 1e-6 rad) is omitted, since the builtin timescale has
no polar-motion table. That omission changes the zonal potential of a
satellite by < 1e-19 in rate and moves a ground clock by < 10 m in the GCRS,
which changes its tidal potential by < 1e-22.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline
from skyfield.sgp4lib import TEME

from ..constants import SECONDS_PER_DAY
from ..span import Span

_GRID_BLOCK = 1000
"""Grid times per skyfield call when the orientation grid is built (bounds its memory)."""

ORIENTATION_GRID_STEP_S = 3 * 3600.0
"""Spacing of the coarse Earth-orientation grid, s (error bound tested)."""

ERA_RATE_RAD_PER_S = 2.0 * np.pi * 1.00273781191135448 / SECONDS_PER_DAY
"""Rate of the Earth rotation angle, rad per UT1 second (TN36 eq. 5.15)."""


def coarse_grid_s(span: Span, step_s: float) -> np.ndarray:
    """Uniform grid covering [-step, duration + step] with at least 6 points, TT seconds."""
    step = min(step_s, max(span.duration_s / 4.0, 60.0))
    n = int(np.ceil(span.duration_s / step)) + 3
    return -step + step * np.arange(n, dtype=float)


@dataclass
class EarthOrientation:
    """Interpolated Earth orientation over one span (build with ``EarthOrientation.for_span``)."""

    span: Span
    _m: CubicSpline
    _gast: CubicSpline
    _teme: CubicSpline

    @classmethod
    def for_span(cls, span: Span, step_s: float = ORIENTATION_GRID_STEP_S) -> EarthOrientation:
        grid = coarse_grid_s(span, step_s)
        m, gast, teme = [], [], []
        # In blocks: skyfield's nutation series holds (terms x times) arrays, so one call over a
        # 15-year grid (44k times) peaked near 1 GB; blocks keep it at tens of MB.
        for lo in range(0, len(grid), _GRID_BLOCK):
            t = span.times(grid[lo:lo + _GRID_BLOCK])
            m.append(np.moveaxis(t.M, -1, 0).reshape(-1, 9))
            gast.append(t.gast * (np.pi / 12.0))
            teme.append(np.moveaxis(TEME.rotation_at(t), -1, 0).reshape(-1, 9))
        return cls(span, CubicSpline(grid, np.concatenate(m)),
                   CubicSpline(grid, np.unwrap(np.concatenate(gast))),
                   CubicSpline(grid, np.concatenate(teme)))

    def gcrs_to_tod(self, t_s: np.ndarray) -> np.ndarray:
        """(N, 3, 3) matrices GCRS -> true equator and equinox of date."""
        return self._m(t_s).reshape(-1, 3, 3)

    def pole_gcrs(self, t_s: np.ndarray) -> np.ndarray:
        """(N, 3) unit vector of the Earth's rotation pole (CIP) in the GCRS."""
        p = self._m(t_s).reshape(-1, 3, 3)[:, 2, :]
        return p / np.linalg.norm(p, axis=1)[:, None]

    def itrs_to_gcrs(self, r_itrs_m: np.ndarray, t_s: np.ndarray):
        """Position and velocity in the GCRS of points fixed in the ITRS.

        ``r_itrs_m``: (3,) or (N, 3), m. Returns ``(r_gcrs_m, v_gcrs_m_per_s)``, each (N, 3).
        Velocity is the Earth's spin at the ERA rate (TN36 eq. 5.15); precession and
        nutation rates (< 1e-7 of it) are left out.
        """
        t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
        r = np.broadcast_to(np.asarray(r_itrs_m, dtype=float), (len(t_s), 3))
        theta = self._gast(t_s)
        c, s = np.cos(theta), np.sin(theta)
        # r_tod = rot_z(+theta) r_itrs; v_tod = d/dt of it at the ERA rate.
        x_tod = np.stack([c * r[:, 0] - s * r[:, 1], s * r[:, 0] + c * r[:, 1], r[:, 2]], axis=1)
        w = ERA_RATE_RAD_PER_S
        v_tod = np.stack(
            [w * (-s * r[:, 0] - c * r[:, 1]), w * (c * r[:, 0] - s * r[:, 1]), 0.0 * r[:, 2]],
            axis=1,
        )
        m = self.gcrs_to_tod(t_s)
        return np.einsum("nji,nj->ni", m, x_tod), np.einsum("nji,nj->ni", m, v_tod)

    def gcrs_to_itrs(self, r_gcrs_m: np.ndarray, t_s: np.ndarray) -> np.ndarray:
        """Rotate (N, 3) GCRS vectors into the ITRS (no polar motion)."""
        m = self.gcrs_to_tod(t_s)
        x_tod = np.einsum("nij,nj->ni", m, r_gcrs_m)
        theta = self._gast(t_s)
        c, s = np.cos(theta), np.sin(theta)
        return np.stack(
            [c * x_tod[:, 0] + s * x_tod[:, 1], -s * x_tod[:, 0] + c * x_tod[:, 1], x_tod[:, 2]],
            axis=1,
        )

    def teme_to_gcrs_matrices(self, t_s: np.ndarray) -> np.ndarray:
        """(N, 3, 3) matrices GCRS -> TEME (apply the transpose to go TEME -> GCRS)."""
        return self._teme(t_s).reshape(-1, 3, 3)

    def teme_to_gcrs(self, vectors_teme: np.ndarray, t_s: np.ndarray) -> np.ndarray:
        """Rotate (N, 3) TEME vectors into the GCRS (skyfield's TEME definition)."""
        r = self._teme(t_s).reshape(-1, 3, 3)
        return np.einsum("nji,nj->ni", r, vectors_teme)
