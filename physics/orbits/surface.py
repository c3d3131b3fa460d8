"""A clock fixed on the Earth's surface (geodetic coordinates on WGS-84).

Position in the ITRS from skyfield's ``wgs84.latlon`` (ellipsoidal height);
GCRS position and velocity from the coarse-grid Earth orientation
(``physics.frames``), the velocity being the Earth's spin.

The gravity a ground clock feels is the *actual* field; we model it as the
normal field of the reference ellipsoid (GRS80, ``physics.potential.normal``)
plus the disturbing potential T = gamma N on the geoid (Bruns' formula,
Heiskanen & Moritz 1967 eq. 2-144), where N is the geoid undulation the user
gives. If the user gives an orthometric height H instead, N = h - H. Without
either, N = 0 is assumed and the budget says so: the real geoid departs from
the ellipsoid by up to ~100 m, about 1e-14 in rate.
"""

from __future__ import annotations

import math

import numpy as np
from skyfield.api import wgs84

from ..errors import PhysicsInputError
from .base import OrbitSource, States

MIN_HEIGHT_M = -500.0
MAX_HEIGHT_M = 100_000.0


class SurfaceClock(OrbitSource):
    """Clock at geodetic latitude/longitude (deg) and ellipsoidal height (m)."""

    kind = "surface"
    is_surface = True

    def __init__(
        self,
        latitude_deg: float,
        longitude_deg: float,
        height_m: float = 0.0,
        geoid_undulation_m: float | None = None,
        orthometric_height_m: float | None = None,
    ):
        if not -90.0 <= latitude_deg <= 90.0:
            raise PhysicsInputError(
                "latitude_deg", latitude_deg, "latitude must lie in [-90, 90] degrees"
            )
        if not MIN_HEIGHT_M <= height_m <= MAX_HEIGHT_M:
            raise PhysicsInputError(
                "height_m", height_m,
                f"a surface clock's height must lie in [{MIN_HEIGHT_M:.0f}, {MAX_HEIGHT_M:.0f}] m "
                "above the ellipsoid",
            )
        if geoid_undulation_m is not None and orthometric_height_m is not None:
            implied = height_m - orthometric_height_m
            if abs(implied - geoid_undulation_m) > 0.01:
                raise PhysicsInputError(
                    "orthometric_height_m", orthometric_height_m,
                    f"height_m - orthometric_height_m = {implied:.3f} m contradicts "
                    f"geoid_undulation_m = {geoid_undulation_m:.3f} m; give one of the two",
                )
        if orthometric_height_m is not None:
            undulation = height_m - orthometric_height_m
        else:
            undulation = geoid_undulation_m
        if undulation is not None and abs(undulation) > 120.0:
            raise PhysicsInputError(
                "geoid_undulation_m", undulation,
                f"a geoid undulation of {undulation:.1f} m is outside the Earth's range "
                "(about -107 m to +86 m)",
            )
        self.latitude_deg = float(latitude_deg)
        self.longitude_deg = float(longitude_deg)
        self.height_m = float(height_m)
        self.geoid_undulation_m = undulation
        self.position = wgs84.latlon(latitude_deg, longitude_deg, elevation_m=height_m)
        self.r_itrs_m = np.asarray(self.position.itrs_xyz.m, dtype=float)
        self.geocentric_sin_lat = float(self.r_itrs_m[2] / np.linalg.norm(self.r_itrs_m))
        self.geodetic_lat_rad = math.radians(latitude_deg)

    def states(self, span, t_s, orientation) -> States:
        t_s = np.asarray(t_s, dtype=float)
        r, v = orientation.itrs_to_gcrs(self.r_itrs_m, t_s)
        return States(r, v, np.zeros(len(t_s), dtype=np.int8))

    def describe(self) -> dict:
        return {
            "type": self.kind,
            "center": "earth",
            "latitude_deg": self.latitude_deg,
            "longitude_deg": self.longitude_deg,
            "height_m": self.height_m,
            "geoid_undulation_m": self.geoid_undulation_m,
            "gravity_model": "GRS80 normal field (J2..J10) plus gamma*N on the geoid",
        }
