"""Orbit blocks of a request: Keplerian elements, TLE, surface clocks, and the ``Orbit`` union
(the file formats' models live in app/formats/models.py and join the union here)."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from ..formats.models import (
    OemOrbitIn,
    OmmOrbitIn,
    OpmOrbitIn,
    Sp3OrbitIn,
    StateVectorOrbitIn,
    TleFileOrbitIn,
)
from ..model_base import StrictModel as _Strict
from ..model_base import UtcDateTime, ZonalGravityModel


class KeplerianOrbitIn(_Strict):
    """Elements around the Earth (GCRS equator; osculating or mean, the orbit following the zonal
    field of ``gravity``), or two-body elements around the Sun, the Moon or Mars (axes of the ICRF
    equator, or the J2000 ecliptic; BCRS budget)."""

    type: Literal["keplerian"]
    center: Literal["earth", "sun", "moon", "mars"] = "earth"
    reference_plane: Literal["icrf_equator", "ecliptic_j2000"] = Field(
        "icrf_equator", description="Axes of the elements: ICRF/GCRS equator, or the J2000 ecliptic "
        "(centres other than the Earth)")
    epoch: UtcDateTime = Field(description="Epoch of the elements, ISO 8601 UTC")
    semi_major_axis_km: float = Field(gt=0, description="Semi-major axis, km")
    eccentricity: float = Field(ge=0, description="Eccentricity (elliptic: < 1)")
    inclination_deg: float = Field(ge=0, le=180)
    ra_of_asc_node_deg: float = 0.0
    arg_of_pericenter_deg: float = 0.0
    mean_anomaly_deg: float = 0.0
    element_type: Literal["osculating", "mean"] | None = Field(
        None, description="Earth orbits: \"osculating\" (default): the state at the epoch is the "
        "two-body conversion of the elements, then the orbit follows the zonal field of "
        "gravity.earth_zonal_degree; \"mean\": Brouwer mean elements of the first-order J2 theory "
        "(short-period terms included; named in the response's model block). With "
        "earth_zonal_degree 0 both are the two-body orbit")
    j2_secular: bool = Field(False, description="Kept for earlier clients: with a zonal field it "
                             "means element_type \"mean\"; with earth_zonal_degree 0 it drifts "
                             "node, perigee and mean anomaly of the two-body ellipse at J2 rates")


class TleOrbitIn(_Strict):
    """A two-line element set, propagated with SGP4."""

    type: Literal["tle"]
    line1: str = Field(min_length=1, max_length=80)
    line2: str = Field(min_length=1, max_length=80)
    name: str | None = Field(None, max_length=80)


class SurfaceClockIn(_Strict):
    """A clock fixed on the surface: the Earth (WGS-84 geodetic coordinates, height above the
    ellipsoid), or the Moon or Mars (planetocentric coordinates, height above the mean sphere,
    IAU rotation elements)."""

    type: Literal["surface"]
    center: Literal["earth", "moon", "mars"] = "earth"
    latitude_deg: float = Field(ge=-90, le=90)
    longitude_deg: float = Field(ge=-180, le=360)
    height_m: float = Field(0.0, description="Height above the WGS-84 ellipsoid (Earth) or the mean "
                            "sphere (Moon: 1737.4 km, Mars: 3389.5 km), m. Omitted with an orthometric "
                            "height and a geoid undulation: h = H + N")
    geoid_undulation_m: float | None = Field(None, description="Geoid height N above the ellipsoid, m")
    orthometric_height_m: float | None = Field(None, description="Height H above the geoid, m; give it "
                                               "with height_m (then N = h - H) or with geoid_undulation_m "
                                               "(then h = H + N)")


Orbit = Annotated[KeplerianOrbitIn | TleOrbitIn | SurfaceClockIn | OmmOrbitIn | OpmOrbitIn | OemOrbitIn
                  | Sp3OrbitIn | TleFileOrbitIn | StateVectorOrbitIn, Field(discriminator="type")]


class GravityIn(ZonalGravityModel):
    """Terms of the clock's rate (default zonal degree 4). Keplerian elements around the Earth follow
    its zonal field, and a state vector or OPM without its own force_model is propagated under it."""
