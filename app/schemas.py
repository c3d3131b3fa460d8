"""Request and response models of the budget API (the CLI reads the same JSON).

Field names carry their units and are a contract: scripts and spreadsheets
are written against them. Add fields; never rename or drop one.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import AwareDatetime, BaseModel, ConfigDict, Field, model_validator


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid")


class KeplerianOrbitIn(_Strict):
    """Osculating (two-body) or mean (with j2_secular) elements around the Earth, GCRS."""

    type: Literal["keplerian"]
    center: Literal["earth"] = "earth"
    epoch: AwareDatetime = Field(description="Epoch of the elements, ISO 8601 UTC")
    semi_major_axis_km: float = Field(gt=0, description="Semi-major axis, km")
    eccentricity: float = Field(ge=0, description="Eccentricity (elliptic: < 1)")
    inclination_deg: float = Field(ge=0, le=180)
    ra_of_asc_node_deg: float = 0.0
    arg_of_pericenter_deg: float = 0.0
    mean_anomaly_deg: float = 0.0
    j2_secular: bool = Field(False, description="Drift node, perigee and mean anomaly at J2 rates")


class TleOrbitIn(_Strict):
    """A two-line element set, propagated with SGP4."""

    type: Literal["tle"]
    line1: str = Field(min_length=1, max_length=80)
    line2: str = Field(min_length=1, max_length=80)
    name: str | None = Field(None, max_length=80)


class SurfaceClockIn(_Strict):
    """A clock fixed on the Earth's surface (WGS-84 geodetic coordinates)."""

    type: Literal["surface"]
    center: Literal["earth"] = "earth"
    latitude_deg: float = Field(ge=-90, le=90)
    longitude_deg: float = Field(ge=-180, le=360)
    height_m: float = Field(0.0, description="Height above the WGS-84 ellipsoid, m")
    geoid_undulation_m: float | None = Field(None, description="Geoid height N above the ellipsoid, m")
    orthometric_height_m: float | None = Field(None, description="Height above the geoid, m")


Orbit = Annotated[KeplerianOrbitIn | TleOrbitIn | SurfaceClockIn, Field(discriminator="type")]


class GravityIn(_Strict):
    earth_zonal_degree: int = Field(4, ge=0, le=6, description="0 = point mass; 2..6 = EGM2008 J2..Jn")
    sun: bool = True
    moon: bool = True

    @model_validator(mode="after")
    def _no_degree_one(self):
        if self.earth_zonal_degree == 1:
            raise ValueError("earth_zonal_degree 1 has no meaning in a geocentric field; use 0 or 2..6")
        return self


class BudgetRequest(_Strict):
    """One clock, one reference, one span."""

    orbit: Orbit
    reference: Literal["TT", "TAI", "GPS", "TCG"] | SurfaceClockIn = "TT"
    start: AwareDatetime
    end: AwareDatetime | None = None
    duration_days: float | None = Field(None, gt=0)
    gravity: GravityIn = Field(default_factory=GravityIn)
    series_step_s: float | None = Field(None, gt=0)
    nominal_frequency_hz: float | None = Field(None, gt=0)

    @model_validator(mode="after")
    def _span(self):
        if self.end is None and self.duration_days is None:
            raise ValueError("give either 'end' or 'duration_days'")
        if self.end is not None and self.duration_days is not None:
            raise ValueError("give 'end' or 'duration_days', not both")
        if self.end is not None and self.end <= self.start:
            raise ValueError("'end' must be after 'start'")
        return self


EXAMPLE_REQUEST = {
    "orbit": {
        "type": "keplerian", "center": "earth", "epoch": "2027-03-01T00:00:00Z",
        "semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
        "ra_of_asc_node_deg": 0.0, "arg_of_pericenter_deg": 0.0, "mean_anomaly_deg": 0.0,
    },
    "reference": "TT",
    "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False},
    "series_step_s": 900, "nominal_frequency_hz": 10230000.0,
}
